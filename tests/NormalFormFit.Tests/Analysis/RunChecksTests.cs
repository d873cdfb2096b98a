using NormalFormFit.Analysis;
using NormalFormFit.Bottleneck;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// Each run check is a rule with its threshold: it returns its flag and a diagnostic with the same code just beyond the
/// threshold, and nothing just inside it. The thresholds are this program's own choices, listed in docs/diagnostics.md
/// (common practice, no source).
/// </summary>
public class RunChecksTests
{
    private const string File = "run.csv";

    [Fact]
    public void FarFromOnset_FiresBeyondAQuarterOfThePredictedPeriod()
    {
        Assert.Null(RunChecks.FarFromOnset(File, measured: 1.24, fromBottleneck: 1.0));
        AssertFinding(RunFlag.FarFromOnset, "far-from-onset", Severity.Info, RunChecks.FarFromOnset(File, measured: 1.26, fromBottleneck: 1.0));
        AssertFinding(RunFlag.FarFromOnset, "far-from-onset", Severity.Info, RunChecks.FarFromOnset(File, measured: 0.74, fromBottleneck: 1.0));
        Assert.Null(RunChecks.FarFromOnset(File, measured: double.NaN, fromBottleneck: 1.0));
    }

    [Fact]
    public void FieldPeriodMismatch_NeedsBothThreeStandardErrorsAndTwoPercent()
    {
        // Combined standard error √(0.003² + 0.004²) = 0.005: a difference of 0.03 is six of them and 3% of T = 1.
        AssertFinding(RunFlag.FieldPeriodMismatch, "field-period-mismatch", Severity.Warning,
            RunChecks.FieldPeriodMismatch(File, new Estimate(1.0, 0.003), new Estimate(1.03, 0.004)));

        // 1.8% of T: 3.6 standard errors, but inside the 2% tolerance.
        Assert.Null(RunChecks.FieldPeriodMismatch(File, new Estimate(1.0, 0.003), new Estimate(1.018, 0.004)));

        // 3% of T but only 1.5 combined standard errors (0.02).
        Assert.Null(RunChecks.FieldPeriodMismatch(File, new Estimate(1.0, 0.012), new Estimate(1.03, 0.016)));
    }

    [Fact]
    public void CoarseSampling_FiresBelowTenSamplesPerPassage()
    {
        // Passage = half of π/√(ab): a predicted period of 2 is a passage of 1, i.e. 9 or 11 samples at these steps.
        AssertFinding(RunFlag.CoarseSampling, "coarse-sampling", Severity.Warning, RunChecks.CoarseSampling(File, 2.0, 1.0 / 9));
        Assert.Null(RunChecks.CoarseSampling(File, 2.0, 1.0 / 11));
    }

    [Fact]
    public void WindowBias_NeedsBothThreeStandardErrorsAndFivePercentOfA()
    {
        static BottleneckFit Fit(double a, double se, double bias) =>
            new(new Estimate(0, 0.01), new Estimate(a, se), new Estimate(1, 0.01), 0.5, 100, 0.01, bias);

        AssertFinding(RunFlag.WindowBias, "window-bias", Severity.Info, RunChecks.WindowBias(File, Fit(0.1, 0.001, 0.006)));
        Assert.Null(RunChecks.WindowBias(File, Fit(0.1, 0.001, 0.004)));
        Assert.Null(RunChecks.WindowBias(File, Fit(0.1, 0.003, 0.006)));
    }

    [Fact]
    public void FewRevolutionsAndFewIntervals_FireBelowThree()
    {
        AssertFinding(RunFlag.FewRevolutions, "few-revolutions", Severity.Warning, RunChecks.FewRevolutions(File, 2));
        Assert.Null(RunChecks.FewRevolutions(File, 3));
        AssertFinding(RunFlag.FewRevolutions, "few-revolutions", Severity.Warning, RunChecks.FewIntervals(File, 2));
        Assert.Null(RunChecks.FewIntervals(File, 3));
    }

    [Fact]
    public void TooShortAndNotTurning_MarkTheRunAsNotTurning()
    {
        AssertFinding(RunFlag.NotTurning, "too-short", Severity.Warning, RunChecks.TooShort(File, RunChecks.MinimumSamples - 1));
        Assert.Null(RunChecks.TooShort(File, RunChecks.MinimumSamples));
        AssertFinding(RunFlag.NotTurning, "not-turning", Severity.Info, RunChecks.NotTurning(File, 0.99));
        Assert.Null(RunChecks.NotTurning(File, 1.0));
    }

    [Fact]
    public void MixedBehaviour_FiresWhenTheLastQuarterAdvancesLessThanATenthOfATurn()
    {
        // Ten periods of 1 turning steadily, then a last quarter (a quarter of 13.33 = 3.33 > two periods) at rest.
        var time = Enumerable.Range(0, 1334).Select(i => i * 0.01).ToArray();
        var phase = time.Select(t => 2 * Math.PI * Math.Min(t, 10.0)).ToArray();
        AssertFinding(RunFlag.MixedBehaviour, "mixed-behaviour", Severity.Warning, RunChecks.MixedBehaviour(File, time, phase, period: 1.0));

        var turning = time.Select(t => 2 * Math.PI * t).ToArray();
        Assert.Null(RunChecks.MixedBehaviour(File, time, turning, period: 1.0));
    }

    private static void AssertFinding(RunFlag flag, string code, Severity severity, RunFinding? finding)
    {
        Assert.NotNull(finding);
        Assert.Equal(flag, finding.Flag);
        Assert.Equal(code, finding.Diagnostic.Code);
        Assert.Equal(severity, finding.Diagnostic.Severity);
        Assert.Equal(File, finding.Diagnostic.File);
    }
}
