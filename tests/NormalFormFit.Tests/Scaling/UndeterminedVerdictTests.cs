using NormalFormFit.Scaling;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Scaling;

/// <summary>
/// When the verdict must be <c>undetermined</c> and when it must not, on synthetic period sets (no simulation): the
/// exponent fit, the three period laws and the verdict, exactly as the analysis chains them. The minimum-speed trend is
/// given as reaching zero, the evidence most favourable to a saddle-node: the periods alone must hold the verdict back.
/// </summary>
public class UndeterminedVerdictTests(ITestOutputHelper output)
{
    private static readonly double[] Mus = [1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3];

    // Exact period of the overdamped rotor θ̇ = μ − sin θ, T = 2π/√(μ² − 1) (Adler 1946; Strogatz, Nonlinear Dynamics
    // and Chaos, 2nd ed., §4.3): a saddle-node on the circle at μc = 1, β = ½.
    private static double RotorPeriod(double mu) => 2 * Math.PI / Math.Sqrt((mu * mu) - 1);

    private static (OnsetKind Verdict, string Evidence, ScalingResult Scaling) Judge(PeriodPoint[] periods)
    {
        var scaling = ScalingFit.Fit(periods)!;
        var speed = new MinimumSpeedTrend(true, 1.0, new Interval(0.99, 1.01), periods.Length, periods.Length);
        var verdict = OnsetKindDecision.Decide(scaling, PeriodLaws.Weigh(periods), speed);
        return (verdict.Kind, verdict.Evidence, scaling);
    }

    [Fact]
    public void ExactRotorPeriods_AreASaddleNodeOnTheCircle()
    {
        // Control: the square-root law itself, 1% errors. Must not be undetermined.
        var (verdict, evidence, _) = Judge([.. Mus.Select(m => new PeriodPoint(m, RotorPeriod(m), 0.01 * RotorPeriod(m)))]);
        output.WriteLine(evidence);

        Assert.Equal(OnsetKind.SaddleNodeOnCircle, verdict);
    }

    [Fact]
    public void ExactLogarithmicPeriods_AreHomoclinic()
    {
        // Control: T = −(1/λ) ln(μ − μc) + c, the law near a homoclinic onset (Gaspard 1990; Strogatz §8.4), with
        // λ = 0.86, c = 2, μc = 1 (values of the damped pendulum of OnsetKindTests, rounded) and 1% errors.
        var (verdict, evidence, _) = Judge([.. Mus.Select(m => new PeriodPoint(m, (-Math.Log(m - 1) / 0.86) + 2, 0.01 * ((-Math.Log(m - 1) / 0.86) + 2)))]);
        output.WriteLine(evidence);

        Assert.Equal(OnsetKind.Homoclinic, verdict);
    }

    [Fact]
    public void PowerLawWithExponentOne_ExcludesOneHalfAndMatchesNoLaw_IsUndetermined()
    {
        // T = 1/(μ − 1): a divergence that is none of the three laws (β = 1 is neither ½ nor the logarithm's 0; the
        // law is invented for this test). The square-root law still fits least badly, so only β's exclusion of ½ can
        // hold the verdict back.
        var (verdict, evidence, scaling) = Judge([.. Mus.Select(m => new PeriodPoint(m, 1 / (m - 1), 0.01 / (m - 1)))]);
        output.WriteLine(evidence);

        Assert.True(scaling.Ci95.Low > 0.5 + ScalingFit.EquivalenceMargin, "precondition: β's interval excludes ½");
        Assert.False(scaling.SupportsOneHalf);
        Assert.Equal(OnsetKind.Undetermined, verdict);
        Assert.Contains("β excludes ½", evidence, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0.6, true)]
    [InlineData(0.4, true)]
    [InlineData(0.7, false)]
    public void AnExponentNearOneHalf_WithTheSquareRootLawDecisiveAndTheMinimumSpeedClosing_IsASaddleNodeOnlyWithinTheMargin(double exponent, bool saddleNode)
    {
        // T = (μ − 1)^−β with 0.1% errors (an invented law): β's interval excludes ½ in each case. The square-root law
        // is decisively the best of the three laws and the minimum speed closes (Judge), so the verdict follows the
        // margin about ½ (OnsetKindDecision.NearHalfMargin = 0.15): a saddle-node on the circle within it, said with the
        // reservation, and undetermined beyond it.
        var (verdict, evidence, scaling) = Judge([.. Mus.Select(m => new PeriodPoint(m, Math.Pow(m - 1, -exponent), 1e-3 * Math.Pow(m - 1, -exponent)))]);
        output.WriteLine(evidence);

        Assert.False(scaling.AdmitsOneHalf, "precondition: β's interval excludes ½");
        Assert.Contains("period-law weights: saddle-node 1.00", evidence, StringComparison.Ordinal);
        if (saddleNode)
        {
            Assert.Equal(OnsetKind.SaddleNodeOnCircle, verdict);
            Assert.Contains("though its interval excludes ½", evidence, StringComparison.Ordinal);
            Assert.Contains("the minimum speed, which extrapolates to zero", evidence, StringComparison.Ordinal);
        }
        else
        {
            Assert.Equal(OnsetKind.Undetermined, verdict);
            Assert.Contains("β excludes ½", evidence, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void PeriodsOnly_WithAnExponentFarFromOneHalf_StayUndetermined()
    {
        // The same T = 1/(μ − 1) given as event times (no phase velocity): β = 1 is far outside ½ ± 0.15, so the
        // allowance for periods only (OnsetKindDecision.NearHalfMargin) must not make it a saddle-node.
        PeriodPoint[] periods = [.. Mus.Select(m => new PeriodPoint(m, 1 / (m - 1), 0.01 / (m - 1)))];
        var scaling = ScalingFit.Fit(periods)!;
        var speed = new MinimumSpeedTrend(false, double.NaN, new Interval(double.NaN, double.NaN), 0, periods.Length, PeriodsOnly: true);
        var verdict = OnsetKindDecision.Decide(scaling, PeriodLaws.Weigh(periods), speed);
        output.WriteLine(verdict.Evidence);

        Assert.True(Math.Abs(scaling.Exponent.Value - 0.5) > OnsetKindDecision.NearHalfMargin, "precondition: β far from ½");
        Assert.NotEqual(OnsetKind.SaddleNodeOnCircle, verdict.Kind);
    }

    [Fact]
    public void FourScatteredRunsWithAnExponentIntervalWiderThanOne_AreUndetermined()
    {
        // Four rotor runs whose periods scatter by their own standard error (8%), alternately high and low: one residual
        // degree of freedom leaves β's interval wider than 1 while the square-root law still takes almost all the weight.
        double[] mus = [1.02, 1.05, 1.1, 1.2];
        int[] sign = [-1, 1, 1, -1];
        var (verdict, evidence, scaling) = Judge([.. mus.Select((m, k) => new PeriodPoint(m, RotorPeriod(m) * (1 + (0.08 * sign[k])), 0.08 * RotorPeriod(m)))]);
        output.WriteLine(evidence);

        Assert.True(scaling.Ci95.Width > ScalingFit.InformativeWidth, "precondition: β's interval is too wide");
        Assert.False(scaling.SupportsOneHalf);
        Assert.Equal(OnsetKind.Undetermined, verdict);
        Assert.Contains("too wide to confirm ½", evidence, StringComparison.Ordinal);
    }

    [Fact]
    public void NoPeriodLawStandingOut_IsUndeterminedEvenWithBetaConsistentWithOneHalf()
    {
        // Five rotor runs scattered by ±2% (their standard error): β is consistent with ½ and its interval narrow, but
        // the logarithmic law fits almost as well, so no law reaches the decisive weight 0.9.
        double[] mus = [1.05, 1.1, 1.2, 1.3, 1.4];
        int[] sign = [1, -1, 1, -1, 1];
        PeriodPoint[] periods = [.. mus.Select((m, k) => new PeriodPoint(m, RotorPeriod(m) * (1 + (0.02 * sign[k])), 0.02 * RotorPeriod(m)))];
        var (verdict, evidence, scaling) = Judge(periods);
        output.WriteLine(evidence);

        Assert.True(scaling.SupportsOneHalf);
        Assert.True(PeriodLaws.Weigh(periods)!.BestWeight < OnsetKindDecision.DecisiveWeight, "precondition: no decisive law");
        Assert.Equal(OnsetKind.Undetermined, verdict);
        Assert.Contains("no period law stands out", evidence, StringComparison.Ordinal);
    }
}
