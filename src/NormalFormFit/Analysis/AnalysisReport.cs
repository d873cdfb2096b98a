using System.Collections.Frozen;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;

namespace NormalFormFit.Analysis;

/// <summary>The whole analysis over a set of runs, built once by <see cref="OnsetAnalysis.Combine"/>.</summary>
/// <param name="Runs">Per-run results, in manifest order.</param>
/// <param name="FromBottleneck">Onset from a → 0.</param>
/// <param name="FromPeriod">Onset from T⁻² → 0.</param>
/// <param name="Agreement">Agreement of the two routes.</param>
/// <param name="Scaling">Scaling law (null with fewer than four timed runs).</param>
/// <param name="Verdict">The kind of onset and its evidence; it also says whether the routes apply (<see cref="OnsetVerdict.RouteStatus"/>).</param>
/// <param name="Diagnostics">Messages about the set as a whole (per-run ones are in each run).</param>
public sealed record AnalysisReport(
    IReadOnlyList<RunResult> Runs,
    OnsetEstimate FromBottleneck,
    OnsetEstimate FromPeriod,
    OnsetAgreement Agreement,
    ScalingResult? Scaling,
    OnsetVerdict Verdict,
    IReadOnlyList<Diagnostic> Diagnostics)
{
    /// <summary>All diagnostics: the set's, then each run's.</summary>
    public IEnumerable<Diagnostic> AllDiagnostics => Diagnostics.Concat(Runs.SelectMany(r => r.Diagnostics));

    /// <summary>The one onset to act on (<see cref="RecommendedOnset.Choose"/>); the two routes are its evidence.</summary>
    public RecommendedOnset Recommended { get; init; } = RecommendedOnset.Choose(FromBottleneck, FromPeriod, Agreement, Verdict.Kind);

    /// <summary>Units of the control parameter, when the manifest gave them.</summary>
    public string? ParamUnits { get; init; }

    /// <summary>Unit of time of the runs (periods are in it, rates per it), when the run files or the options gave it.</summary>
    public string? TimeUnit { get; init; }

    /// <summary>Name of the control parameter from the manifest's header (<c>voltage</c>); null when it is just <c>param</c>.</summary>
    public string? ParamName { get; init; }

    /// <summary>Suggested next runs: where they shrink each route's onset interval most, and the interval expected after them.</summary>
    public IReadOnlyList<NextMeasurement> NextMeasurements { get; init; } = [];

    /// <summary>
    /// Runs of <see cref="Runs"/> that lie where both resting and turning runs were recorded: the set of runs, not any
    /// one run, is the evidence for <see cref="RunFlag.Bistable"/>.
    /// </summary>
    public IReadOnlySet<RunResult> BistableRuns { get; init; } = FrozenSet<RunResult>.Empty;

    /// <summary>A run's flags: its own (<see cref="RunResult.Flags"/>), then <see cref="RunFlag.Bistable"/> when the set gives it.</summary>
    public IReadOnlyList<RunFlag> FlagsOf(RunResult run)
    {
        ArgumentNullException.ThrowIfNull(run);
        return BistableRuns.Contains(run) && !run.Flags.Contains(RunFlag.Bistable) ? [.. run.Flags, RunFlag.Bistable] : run.Flags;
    }
}
