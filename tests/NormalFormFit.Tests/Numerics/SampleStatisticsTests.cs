using NormalFormFit.Numerics;

namespace NormalFormFit.Tests.Numerics;

/// <summary>Sample standard deviation and standard error of the mean against NumPy 1.24.2 and SciPy 1.10.1.</summary>
public class SampleStatisticsTests
{
    // NumPy's pairwise sum and our sequential sum of eight or seven terms differ by at most a few ulps: 1e-14
    // relative is the tolerance.
    private const double Relative = 1e-14;

    private static readonly double[] Textbook = [2, 4, 4, 4, 5, 5, 7, 9];
    private static readonly double[] Irregular = [0.12, -1.7, 3.3, 2.05, 0.0, -0.44, 9.1];

    [Fact]
    public void StandardDeviation_OfTheTextbookEight_IsRootOfThirtyTwoSevenths()
    {
        // Mean 5, squared deviations 9+1+1+1+0+0+4+16 = 32, s = √(32/7) = 2.138089935299395 (by hand; NumPy 1.24.2
        // numpy.std(x, ddof=1) prints the same digits).
        Assert.Equal(2.138089935299395, SampleStatistics.StandardDeviation(Textbook), 2.138089935299395 * Relative);
    }

    [Fact]
    public void StandardErrorOfMean_OfTheTextbookEight_MatchesScipySem()
    {
        // s/√8 = √(4/7) = 0.7559289460184544: scipy.stats.sem(x) (SciPy 1.10.1, ddof=1 by default).
        Assert.Equal(0.7559289460184544, SampleStatistics.StandardErrorOfMean(Textbook), 0.7559289460184544 * Relative);
    }

    [Fact]
    public void StandardDeviationAndError_OfIrregularValues_MatchNumpyAndScipy()
    {
        // numpy.std(y, ddof=1) = 3.6269447985085974, scipy.stats.sem(y) = 1.3708562794018597 (NumPy 1.24.2, SciPy 1.10.1)
        // for y = [0.12, -1.7, 3.3, 2.05, 0.0, -0.44, 9.1].
        Assert.Equal(3.6269447985085974, SampleStatistics.StandardDeviation(Irregular), 3.6269447985085974 * Relative);
        Assert.Equal(1.3708562794018597, SampleStatistics.StandardErrorOfMean(Irregular), 1.3708562794018597 * Relative);
    }

    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    public void StandardDeviationAndError_OfFewerThanTwoValues_AreNaN(int count)
    {
        var xs = Enumerable.Repeat(3.0, count).ToArray();

        Assert.True(double.IsNaN(SampleStatistics.StandardDeviation(xs)));
        Assert.True(double.IsNaN(SampleStatistics.StandardErrorOfMean(xs)));
        Assert.True(double.IsNaN(SampleStatistics.StandardDeviationFromSums(xs.Sum(), xs.Sum(x => x * x), count)));
    }

    [Fact]
    public void StandardDeviationFromSums_OfModestValues_AgreesWithTheTwoPassFormula()
    {
        // Σx = 40, Σx² = 232 for the textbook eight: (232 − 1600/8)/7 = 32/7, the same s.
        var fromSums = SampleStatistics.StandardDeviationFromSums(Textbook.Sum(), Textbook.Sum(x => x * x), Textbook.Length);

        Assert.Equal(SampleStatistics.StandardDeviation(Textbook), fromSums, 2.138089935299395 * Relative);
    }

    [Fact]
    public void StandardDeviation_KeepsItsDigitsWhenTheMeanIsLarge_WhereTheSumsFormulaLosesThem()
    {
        // Shifting by 10⁹ leaves s = √(32/7) (the shifted values are exact in double). The sums formula subtracts two
        // numbers near 8·10¹⁸ whose spacing is 1024 (Chan, Golub & LeVeque 1983): its answer is wrong by far more than
        // 1e-6, while the two-pass formula stays within rounding of the shifted mean (1e-9 relative).
        var shifted = Textbook.Select(x => x + 1e9).ToArray();
        var twoPass = SampleStatistics.StandardDeviation(shifted);
        var fromSums = SampleStatistics.StandardDeviationFromSums(shifted.Sum(), shifted.Sum(x => x * x), shifted.Length);

        Assert.Equal(Math.Sqrt(32.0 / 7.0), twoPass, 1e-9 * twoPass);
        Assert.True(Math.Abs(fromSums - twoPass) > 1e-6, $"sums formula gave {fromSums}");
    }
}
