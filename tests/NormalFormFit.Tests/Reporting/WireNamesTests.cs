using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Onset;
using NormalFormFit.Reporting;
using NormalFormFit.Scaling;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// The names the JSON report, the run lines and the summary give the analysis' enums: the output contract of README and
/// docs/diagnostics.md (our own contract, no outside source). Every value has its documented name and reads back.
/// </summary>
public class WireNamesTests
{
    [Fact]
    public void EveryRunFlag_HasItsDocumentedName_AndReadsBack()
    {
        var expected = new Dictionary<RunFlag, string>
        {
            [RunFlag.FewRevolutions] = "few-revolutions",
            [RunFlag.NotTurning] = "not-turning",
            [RunFlag.FarFromOnset] = "far-from-onset",
            [RunFlag.FieldPeriodMismatch] = "field-period-mismatch",
            [RunFlag.NoBottleneck] = "no-bottleneck",
            [RunFlag.UnsafeUnwrap] = "unsafe-unwrap",
            [RunFlag.CoarseSampling] = "coarse-sampling",
            [RunFlag.WindowBias] = "window-bias",
            [RunFlag.NoiseDominated] = "noise-dominated",
            [RunFlag.MixedBehaviour] = "mixed-behaviour",
            [RunFlag.Bistable] = "bistable",
            [RunFlag.LargeGaps] = "large-gaps",
            [RunFlag.NotAnEllipse] = "not-an-ellipse",
            [RunFlag.PeriodsOnly] = "periods-only",
        };

        Assert.Equal(Enum.GetValues<RunFlag>().Length, expected.Count);
        foreach (var (flag, name) in expected)
        {
            Assert.Equal(name, WireNames.Of(flag));
            Assert.True(WireNames.TryParse(name, out RunFlag back));
            Assert.Equal(flag, back);
        }
    }

    [Fact]
    public void InputKinds_HaveTheirDocumentedNames_AndReadBack()
    {
        Assert.Equal(["phase", "positions", "events", "signal"], Enum.GetValues<RecordingKind>().Select(WireNames.Of));
        foreach (var kind in Enum.GetValues<RecordingKind>())
        {
            Assert.True(WireNames.TryParse(WireNames.Of(kind), out RecordingKind back));
            Assert.Equal(kind, back);
        }
    }

    [Fact]
    public void TurningSenses_HaveTheNamesCompareDocuments()
    {
        // docs/model-expressions.md: turning_sense is forward, backward or mixed.
        Assert.Equal(["forward", "backward", "mixed"], Enum.GetValues<NormalFormFit.Compare.TurningSense>().Select(WireNames.Of));
    }

    [Fact]
    public void KindsOfOnset_RoutesStatusesLawsAndForms_HaveTheirDocumentedNames()
    {
        Assert.Equal(["saddle-node-on-circle", "homoclinic", "finite-period", "undetermined"], Enum.GetValues<OnsetKind>().Select(WireNames.Of));
        Assert.Equal(["bottleneck", "period"], Enum.GetValues<OnsetRoute>().Select(WireNames.Of));
        Assert.Equal(["applicable", "unconfirmed", "unreliable", "not-applicable"], Enum.GetValues<RouteStatus>().Select(WireNames.Of));
        Assert.Equal(["polynomial", "square-root-with-offset"], Enum.GetValues<OnsetLaw>().Select(WireNames.Of));
        Assert.Equal(["saddle-node", "homoclinic", "finite-period"], Enum.GetValues<PeriodLaw>().Select(WireNames.Of));
        Assert.Equal(["power-law", "power-law-with-offset", "power-law-of-quadratic-rate"], Enum.GetValues<ScalingForm>().Select(WireNames.Of));
    }

    [Theory]
    [InlineData("Bistable")]
    [InlineData("no such flag")]
    [InlineData("")]
    [InlineData(null)]
    public void UnknownOrMiscasedNames_AreRefused(string? name)
    {
        Assert.False(WireNames.TryParse(name, out RunFlag _));
        Assert.False(WireNames.TryParse(name, out RecordingKind _));
    }
}
