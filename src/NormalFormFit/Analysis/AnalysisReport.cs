using NormalFormFit.Onset;
using NormalFormFit.Scaling;

namespace NormalFormFit.Analysis;

/// <summary>The whole analysis over a set of runs.</summary>
/// <param name="Runs">Per-run results, in manifest order.</param>
/// <param name="FromBottleneck">Onset from a → 0.</param>
/// <param name="FromPeriod">Onset from T⁻² → 0.</param>
/// <param name="Agreement">Agreement of the two routes.</param>
/// <param name="Scaling">Scaling law and verdict (null with fewer than four timed runs).</param>
/// <param name="Diagnostics">Messages about the set as a whole (per-run ones are in each run).</param>
public sealed record AnalysisReport(
    IReadOnlyList<RunResult> Runs,
    OnsetEstimate FromBottleneck,
    OnsetEstimate FromPeriod,
    OnsetAgreement Agreement,
    ScalingResult? Scaling,
    IReadOnlyList<Diagnostic> Diagnostics)
{
    /// <summary>All diagnostics: the set's, then each run's.</summary>
    public IEnumerable<Diagnostic> AllDiagnostics => Diagnostics.Concat(Runs.SelectMany(r => r.Diagnostics));

    /// <summary>Units of the control parameter, when the manifest gave them.</summary>
    public string? ParamUnits { get; init; }
}

/// <summary>
/// Combines run results into onset estimates by both routes, their agreement and the scaling law.
/// </summary>
public static class OnsetAnalysis
{
    /// <summary>Minimum turning runs for an answer.</summary>
    public const int MinimumRuns = 3;

    /// <summary>Analyses a set of run results.</summary>
    public static AnalysisReport Combine(IReadOnlyList<RunResult> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var diags = new List<Diagnostic>();

        var aPoints = runs
            .Where(r => r.IsTurning && r.Bottleneck is { } b && double.IsFinite(b.A.Value) && b.A.StandardError > 0 && double.IsFinite(b.A.StandardError))
            .Select(r => new TrendPoint(r.Param, r.Bottleneck!.A.Value, r.Bottleneck.A.StandardError))
            .ToList();
        var tPoints = runs
            .Where(r => r.IsTurning && r.Period is { } p && p.Measured.Value > 0 && p.Measured.StandardError > 0 && double.IsFinite(p.Measured.StandardError))
            .Select(r =>
            {
                var t = r.Period!.Measured;
                return new TrendPoint(r.Param, 1.0 / (t.Value * t.Value), 2.0 * t.StandardError / (t.Value * t.Value * t.Value));
            })
            .ToList();

        var fromA = TrendFit.Root("bottleneck", aPoints);
        var fromT = TrendFit.Root("period", tPoints);
        var agreement = TrendFit.Agreement(fromA, fromT, ExplainDisagreement(runs));
        if (!agreement.Consistent && double.IsFinite(agreement.Z))
        {
            diags.Add(new Diagnostic(Severity.Warning, "routes-disagree", string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"the two onset routes disagree (z = {agreement.Z:F1}); most likely: {agreement.Reason}")));
        }

        var scaling = ScalingFit.Fit(runs
            .Where(r => r.IsTurning && r.Period is { } p && double.IsFinite(p.Measured.StandardError))
            .Select(r => new PeriodPoint(r.Param, r.Period!.Measured.Value, r.Period.Measured.StandardError))
            .ToList());
        if (scaling is null)
        {
            diags.Add(new Diagnostic(Severity.Info, "no-scaling", "the scaling law needs at least four runs with timed periods"));
        }

        if (aPoints.Count == 0 && runs.Any(r => r.Flags.Contains(RunFlags.PeriodsOnly)))
        {
            diags.Add(new Diagnostic(Severity.Info, "bottleneck-not-available",
                "event times carry periods only: the bottleneck route is not available; the onset comes from the period route"));
        }

        diags.AddRange(fromA.Diagnostics);
        diags.AddRange(fromT.Diagnostics);
        return new AnalysisReport(runs, fromA, fromT, agreement, scaling, diags);
    }

    /// <summary>The turning runs usable by at least one route.</summary>
    public static int UsableRuns(IReadOnlyList<RunResult> runs) =>
        runs.Count(r => r.IsTurning && (r.Bottleneck is not null || r.Period is { Revolutions: >= 2 }));

    private static string ExplainDisagreement(IReadOnlyList<RunResult> runs)
    {
        var turning = runs.Where(r => r.IsTurning).ToList();
        if (turning.Count == 0)
        {
            return "no turning runs";
        }

        var far = turning.Count(r => r.Flags.Contains(RunFlags.FarFromOnset));
        var few = turning.Count(r => r.Flags.Contains(RunFlags.FewRevolutions));
        var mismatch = turning.Count(r => r.Flags.Contains(RunFlags.FieldPeriodMismatch));
        var none = turning.Count(r => r.Flags.Contains(RunFlags.NoBottleneck));
        if (none * 2 >= turning.Count)
        {
            return "most runs show no bottleneck: the onset may not be a saddle-node on the circle";
        }

        if (far * 2 >= turning.Count)
        {
            return "most runs are far from onset, where a and T⁻² are not yet linear in the parameter: measure closer to onset";
        }

        if (few > 0)
        {
            return $"{few} run(s) have fewer than three timed revolutions: record longer";
        }

        if (mismatch > 0)
        {
            return $"{mismatch} run(s) have a distorted field (its period disagrees with the measured one): sample faster or check the phase";
        }

        return "the runs far from onset pull the two trends differently: measure closer to onset";
    }
}
