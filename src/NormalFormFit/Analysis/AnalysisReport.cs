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

    /// <summary>Suggested next runs: where they shrink each route's onset interval most, and the interval expected after them.</summary>
    public IReadOnlyList<NextMeasurement> NextMeasurements { get; init; } = [];
}

/// <summary>
/// Combines run results into onset estimates by both routes, their agreement and the scaling law.
/// </summary>
public static class OnsetAnalysis
{
    /// <summary>Minimum turning runs for an answer.</summary>
    public const int MinimumRuns = 3;

    /// <summary>Analyses a set of run results.</summary>
    /// <remarks>
    /// Noise-dominated runs are left out of both routes while three runs remain. Runs below onset enter the period route
    /// through their relaxation rate: near the stable node κ²/4 = −ab, so −κ²/(4π²) continues T⁻² = ab/π² linearly
    /// through μc (Strogatz, Nonlinear Dynamics and Chaos, 2nd ed., §4.3); they are kept only near onset and on the
    /// resting side, and dropped when they do not follow the trend. The period route may instead use the square-root law
    /// with an offset, T = α(μ − μc)^−½ + β, when AICc prefers it on the turning runs (<see cref="PeriodRoute"/>); runs
    /// below onset, which have no period, then re-enter through the polynomial trend. The kind of onset decides whether
    /// each route applies.
    /// </remarks>
    public static AnalysisReport Combine(IReadOnlyList<RunResult> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var diags = new List<Diagnostic>();
        var inv = System.Globalization.CultureInfo.InvariantCulture;

        var noisy = runs.Where(r => r.IsTurning && r.Flags.Contains(RunFlags.NoiseDominated)).ToHashSet();
        var aPoints = APoints(runs, noisy);
        var tPoints = TPoints(runs, noisy);
        if (noisy.Count > 0)
        {
            if (APoints(runs, []).Count >= MinimumRuns && aPoints.Count < MinimumRuns)
            {
                aPoints = APoints(runs, []);
            }

            if (TPoints(runs, []).Count >= MinimumRuns && tPoints.Count < MinimumRuns)
            {
                tPoints = TPoints(runs, []);
            }

            diags.Add(new Diagnostic(Severity.Warning, "noise-dominated-runs", string.Create(inv,
                $"{noisy.Count} run(s) are noise-dominated near the bottleneck (noise shortens the passage); they are left out of the onset fits where at least {MinimumRuns} runs remain")));
        }

        var fromA = TrendFit.Root("bottleneck", aPoints);
        var fromT = PeriodRoute.Estimate(tPoints);

        // Runs below onset: relaxation rates continue the period trend through μc.
        var resting = runs.Where(r => !r.IsTurning && r.Relaxation is { } x && x.Rate.StandardError > 0 && x.Rate.StandardError < 0.5 * x.Rate.Value).ToList();
        var below = new List<RunResult>();
        if (resting.Count > 0 && fromT.IsAvailable && fromT.Curve is { } tt && tPoints.Count >= MinimumRuns)
        {
            var side = Math.Sign(tt.Slope(fromT.Value));
            var span = tPoints.Max(p => p.Mu) - tPoints.Min(p => p.Mu);
            below = resting.Where(r => side * (r.Param - fromT.Value) < 0 && Math.Abs(r.Param - fromT.Value) <= span).ToList();
            if (below.Count > 0)
            {
                var extra = below.Select(r =>
                {
                    var e = r.Relaxation!.SquaredRateOverFourPiSquared;
                    return new TrendPoint(r.Param, -e.Value, e.StandardError);
                }).ToList();
                // The square-root law has no place for a relaxation rate (no period): with runs below onset the route
                // uses the polynomial trend through them, which brackets the onset instead of extrapolating to it.
                var withBelow = TrendFit.Root(PeriodRoute.Route, tPoints, extraPoints: extra);
                if (withBelow.IsAvailable && withBelow.Trend is { } wt && extra.All(p => Math.Abs(p.Y - wt.Evaluate(p.Mu)) <= 4 * Math.Sqrt((p.StandardError * p.StandardError * Math.Max(wt.ReducedChiSquare, 1)) + wt.Variance(p.Mu))))
                {
                    fromT = withBelow with { RunsBelowOnset = extra.Count };
                    diags.Add(new Diagnostic(Severity.Info, "runs-below-onset", string.Create(inv,
                        $"{extra.Count} run(s) below onset enter the period route through their relaxation rate (−κ²/4π² continues T⁻²)")));
                }
                else
                {
                    diags.Add(new Diagnostic(Severity.Warning, "relaxation-off-trend",
                        "the relaxation rates of the runs below onset do not continue the period trend; they are left out (the onset may not be a saddle-node, or they are too far from onset)"));
                    below.Clear();
                }
            }
        }

        runs = FlagBistable(runs, fromT, diags);

        var periodPoints = runs
            .Where(r => r.IsTurning && !noisy.Contains(r) && r.Period is { } p && double.IsFinite(p.Measured.StandardError))
            .Select(r => new PeriodPoint(r.Param, r.Period!.Measured.Value, r.Period.Measured.StandardError))
            .ToList();
        if (periodPoints.Count < 4)
        {
            periodPoints = runs
                .Where(r => r.IsTurning && r.Period is { } p && double.IsFinite(p.Measured.StandardError))
                .Select(r => new PeriodPoint(r.Param, r.Period!.Measured.Value, r.Period.Measured.StandardError))
                .ToList();
        }

        var scaling = ScalingFit.Fit(periodPoints);
        var verdict = OnsetKinds.Undetermined;
        if (scaling is null)
        {
            diags.Add(new Diagnostic(Severity.Info, "no-scaling", "the scaling law needs at least four runs with timed periods"));
        }
        else
        {
            var turning = runs.Where(r => r.IsTurning).ToList();
            var speed = OnsetKind.MinimumSpeed(fromA, turning.Select(r => r.Param).ToList(), turning.Count(r => r.Bottleneck is not null))
                with
            { PeriodsOnly = turning.Count > 0 && turning.All(r => r.Flags.Contains(RunFlags.PeriodsOnly)) };
            var weights = PeriodLaws.Weigh(periodPoints);
            var (v, evidence) = OnsetKind.Judge(scaling, weights, speed);
            verdict = v;
            scaling = scaling with { Verdict = v, Evidence = evidence, Weights = weights, MinimumSpeed = speed };
        }

        (fromA, fromT) = ApplyVerdict(verdict, fromA, fromT, diags);
        var agreement = TrendFit.Agreement(fromA, fromT, ExplainDisagreement(runs, verdict, noisy.Count));
        if (!agreement.Consistent && double.IsFinite(agreement.Z))
        {
            diags.Add(new Diagnostic(Severity.Warning, "routes-disagree", string.Create(inv,
                $"the two onset routes disagree (z = {agreement.Z:F1}); most likely: {agreement.Reason}")));
        }

        foreach (var est in new[] { fromA, fromT })
        {
            if (LawMisfit(est) is { } misfit)
            {
                diags.Add(misfit);
            }
        }

        var next = new List<NextMeasurement>();
        if (verdict is OnsetKinds.SaddleNodeOnCircle or OnsetKinds.Undetermined)
        {
            foreach (var (est, pts) in new[] { (fromA, aPoints), (fromT, tPoints) })
            {
                if (MeasurementPlanner.Suggest(est, pts) is { } s)
                {
                    var y = fromT.Curve?.Evaluate(s.Param) ?? double.NaN;
                    next.Add(s with { ExpectedPeriod = y > 0 ? 1 / Math.Sqrt(y) : double.NaN });
                }
            }
        }

        if (aPoints.Count == 0 && runs.Any(r => r.Flags.Contains(RunFlags.PeriodsOnly)))
        {
            diags.Add(new Diagnostic(Severity.Info, "bottleneck-not-available",
                "event times carry periods only: the bottleneck route is not available; the onset comes from the period route"));
        }

        diags.AddRange(fromA.Diagnostics);
        diags.AddRange(fromT.Diagnostics);
        return new AnalysisReport(runs, fromA, fromT, agreement, scaling, diags) { NextMeasurements = next };
    }

    /// <summary>
    /// A warning when a route's fitted law misses its points by far more than their errors allow. The Birge ratio
    /// already widens the interval by √(χ²/dof), which covers errors misstated by a common factor, but not a law of the
    /// wrong shape: its bias can exceed the widened interval (Morris–Lecar spike times: the truncated period law's
    /// χ²/dof is about 57 and the interval misses the onset). Threshold: four times the 0.999 quantile of χ²_dof/dof
    /// (Pearson's χ² test; quantile by MathNet's ChiSquared.InvCDF). The factor four allows for per-run errors from a few
    /// revolutions being understated by up to two: on correct laws the calibration repeats reach χ²/dof = 10.7 (rotor and
    /// theta neuron, 400 fits each), so the plain 0.999 quantile fired in 4–8% of them; with the factor, in none.
    /// </summary>
    private static Diagnostic? LawMisfit(OnsetEstimate est)
    {
        if (!est.IsAvailable || est.Curve is not { } curve || curve.DegreesOfFreedom < 1 || !double.IsFinite(curve.ReducedChiSquare))
        {
            return null;
        }

        var dof = curve.DegreesOfFreedom;
        var limit = 4.0 * MathNet.Numerics.Distributions.ChiSquared.InvCDF(dof, 0.999) / dof;
        return curve.ReducedChiSquare <= limit ? null : new Diagnostic(Severity.Warning, "law-misfit", string.Create(System.Globalization.CultureInfo.InvariantCulture,
            $"the {est.Route} route's law ({curve.Description}) misses its runs by far more than their errors allow (χ²/dof = {curve.ReducedChiSquare:G3} on {dof} degrees of freedom, above {limit:G3}): its interval is widened by √(χ²/dof), but a law of the wrong shape can be biased beyond that, so read the interval as too narrow and compare with the other route"));
    }

    private static List<TrendPoint> APoints(IReadOnlyList<RunResult> runs, HashSet<RunResult> excluded) => runs
        .Where(r => r.IsTurning && !excluded.Contains(r) && r.Bottleneck is { } b && double.IsFinite(b.A.Value) && b.A.StandardError > 0 && double.IsFinite(b.A.StandardError))
        .Select(r => new TrendPoint(r.Param, r.Bottleneck!.A.Value, r.Bottleneck.A.StandardError))
        .ToList();

    private static List<TrendPoint> TPoints(IReadOnlyList<RunResult> runs, HashSet<RunResult> excluded) => runs
        .Where(r => r.IsTurning && !excluded.Contains(r) && r.Period is { } p && p.Measured.Value > 0 && p.Measured.StandardError > 0 && double.IsFinite(p.Measured.StandardError))
        .Select(r =>
        {
            var t = r.Period!.Measured;
            return new TrendPoint(r.Param, 1.0 / (t.Value * t.Value), 2.0 * t.StandardError / (t.Value * t.Value * t.Value));
        })
        .ToList();

    /// <summary>Flags resting runs on the turning side of the onset (and turning runs beyond resting ones) as bistable.</summary>
    private static IReadOnlyList<RunResult> FlagBistable(IReadOnlyList<RunResult> runs, OnsetEstimate fromT, List<Diagnostic> diags)
    {
        if (!fromT.IsAvailable || fromT.Curve is not { } trend)
        {
            return runs;
        }

        var side = Math.Sign(trend.Slope(fromT.Value));
        var turningNear = runs.Where(r => r.IsTurning).Select(r => side * r.Param).DefaultIfEmpty(double.PositiveInfinity).Min();
        var resting = runs.Where(r => !r.IsTurning).Select(r => side * r.Param).DefaultIfEmpty(double.NegativeInfinity).Max();
        if (resting <= turningNear)
        {
            return runs;
        }

        var count = 0;
        var result = runs.Select(r =>
        {
            var x = side * r.Param;
            var overlap = r.IsTurning ? x <= resting : x >= turningNear;
            if (!overlap || r.Flags.Contains(RunFlags.Bistable))
            {
                return r;
            }

            count++;
            return r with { Flags = [.. r.Flags, RunFlags.Bistable] };
        }).ToList();
        diags.Add(new Diagnostic(Severity.Warning, "bistable", $"{count} run(s) lie where both resting and turning runs were recorded: the system is bistable or hysteretic there, and the onset found is that of the turning branch"));
        return result;
    }

    private static (OnsetEstimate A, OnsetEstimate T) ApplyVerdict(string verdict, OnsetEstimate fromA, OnsetEstimate fromT, List<Diagnostic> diags)
    {
        switch (verdict)
        {
            case OnsetKinds.SaddleNodeOnCircle:
                return (fromA, fromT);
            case OnsetKinds.Homoclinic:
                const string whyH = "the onset looks homoclinic: the minimum speed and T⁻² do not vanish linearly there (T grows like a logarithm), so the extrapolation is biased; use the homoclinic law's onset";
                diags.Add(new Diagnostic(Severity.Warning, "route-unreliable", "both onset routes assume a saddle-node on the circle, but " + whyH));
                return (fromA with { Status = RouteStatus.Unreliable, StatusReason = whyH }, fromT with { Status = RouteStatus.Unreliable, StatusReason = whyH });
            case OnsetKinds.FinitePeriod:
                const string whyF = "the oscillation is born with a finite period (Hopf-like): there is no bottleneck closing and the period does not diverge, so neither a nor T⁻² goes to zero at onset";
                diags.Add(new Diagnostic(Severity.Warning, "route-not-applicable", "the onset routes do not apply: " + whyF));
                return (fromA with { Status = RouteStatus.NotApplicable, StatusReason = whyF }, fromT with { Status = RouteStatus.NotApplicable, StatusReason = whyF });
            default:
                const string whyU = "the kind of onset could not be confirmed as a saddle-node on the circle; the route assumes it";
                return (fromA with { Status = RouteStatus.Unconfirmed, StatusReason = whyU }, fromT with { Status = RouteStatus.Unconfirmed, StatusReason = whyU });
        }
    }

    /// <summary>The turning runs usable by at least one route.</summary>
    public static int UsableRuns(IReadOnlyList<RunResult> runs) =>
        runs.Count(r => r.IsTurning && (r.Bottleneck is not null || r.Period is { Revolutions: >= 2 }));

    private static string ExplainDisagreement(IReadOnlyList<RunResult> runs, string verdict, int noisy)
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
        if (verdict is OnsetKinds.Homoclinic or OnsetKinds.FinitePeriod)
        {
            return $"wrong kind of onset: the runs look {verdict}, not a saddle-node on the circle, so a and T⁻² need not vanish together";
        }

        if (noisy > 0)
        {
            return $"{noisy} run(s) are noise-dominated: noise carries the phase through the bottleneck early, shortening the period; record with less noise or farther from onset";
        }

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
