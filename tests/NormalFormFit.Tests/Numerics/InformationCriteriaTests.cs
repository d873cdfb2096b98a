using NormalFormFit.Numerics;

namespace NormalFormFit.Tests.Numerics;

/// <summary>AIC and AICc against the formulas of Burnham &amp; Anderson (2002, §2.4) evaluated by hand.</summary>
public class InformationCriteriaTests
{
    // The hand values carry 11–12 significant digits (ln from tables to 12 digits): 1e-9 absolute is well above that
    // rounding and far below any slip in the formula (a wrong k or n moves the value by ≥ 0.1).
    private const double Tolerance = 1e-9;

    [Fact]
    public void Aicc_OfTenPointsAndThreeParameters_MatchesTheFormulaByHand()
    {
        // n = 10, RSS = 12.5, k = 3: AIC = n ln(RSS/n) + 2k = 10·ln 1.25 + 6 = 10·0.223143551314 + 6 = 8.23143551314;
        // AICc = AIC + 2k(k + 1)/(n − k − 1) = 8.23143551314 + 24/6 = 12.23143551314.
        Assert.Equal(8.23143551314, InformationCriteria.Aic(12.5, 10, 3), Tolerance);
        Assert.Equal(12.23143551314, InformationCriteria.Aicc(12.5, 10, 3), Tolerance);
    }

    [Fact]
    public void Aicc_OfTwentyPointsAndFiveParameters_MatchesTheFormulaByHand()
    {
        // n = 20, RSS = 3, k = 5: AIC = 20·ln 0.15 + 10 = 20·(−1.897119984886) + 10 = −27.94239969772;
        // AICc = −27.94239969772 + 2·5·6/14 = −27.94239969772 + 4.285714285714 = −23.65668541201.
        Assert.Equal(-27.94239969772, InformationCriteria.Aic(3.0, 20, 5), Tolerance);
        Assert.Equal(-23.65668541201, InformationCriteria.Aicc(3.0, 20, 5), Tolerance);
    }

    [Theory]
    [InlineData(4, 3)]
    [InlineData(5, 4)]
    [InlineData(3, 3)]
    public void Aicc_WithoutTwoPointsToSpare_IsInfinite(int n, int k)
    {
        // The correction 2k(k + 1)/(n − k − 1) is undefined (or negative) for n ≤ k + 1.
        Assert.Equal(double.PositiveInfinity, InformationCriteria.Aicc(1.0, n, k));
    }

    [Fact]
    public void Aic_OfAnExactFit_IsFinite()
    {
        // RSS = 0 is floored at 1e-300: n·ln(1e-300/n) + 2k, finite, and lower than any inexact fit's.
        var exact = InformationCriteria.Aic(0.0, 8, 2);

        Assert.True(double.IsFinite(exact));
        Assert.True(exact < InformationCriteria.Aic(1e-200, 8, 2));
    }
}
