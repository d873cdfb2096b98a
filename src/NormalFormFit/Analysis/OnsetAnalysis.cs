using System.Collections.Frozen;
using System.Globalization;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;

namespace NormalFormFit.Analysis;

/// <summary>
/// Combines run results into onset estimates by both routes, their agreement and the scaling law.
/// </summary>
public static class OnsetAnalysis
{
    /// <summary>Minimum turning runs for an answer.</summary>
    public const int MinimumRuns = 3;

    /// <summary>Minimum runs with timed periods for the scaling law (three parameters and one degree of freedom).</summary>
    public const int MinimumScalingRuns = 4;

    /// <summary>A resting run's relaxation rate is used only when its standard error is below this fraction of it.</summary>
    public const double MaximumRelativeRateError = 0.5;

    /// <summary>Runs below onset are kept in the period route only within this many combined standard errors of its trend.</summary>
    public const double BelowOnsetTrendTolerance = 4.0;

    /// <summary>
    /// A route's law misfits when χ²/dof exceeds this multiple of the 0.999 quantile of χ²/dof (common practice, no
    /// source: it never fired in the 800 calibration fits, where correct laws reached 10.7, and fires on near-noise-free
    /// spike times fitted by a law of the wrong shape).
    /// </summary>
    public const double LawMisfitFactor = PeriodRoute.MisfitFactor;

    /// <summary>
    /// Runs whose smoothed phase scatters by less than this (radians) about the spline carry no measurement noise: a
    /// simulation without noise, or data smoothed before export. No instrument resolves a phase this finely (a 16-bit
    /// encoder resolves about 1e-4 rad; common practice, no source), so the per-run errors then reflect numerical
    /// error only.
    /// </summary>
    public const double NoiseFreePhaseSd = 1e-6;

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
    /// <param name="runs">The analysed runs, in manifest order.</param>
    /// <param name="paramUnits">Units of the control parameter, when the manifest gave them.</param>
    public static AnalysisReport Combine(IReadOnlyList<RunResult> runs, string? paramUnits = null)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var diags = new List<Diagnostic>();
        var inv = CultureInfo.InvariantCulture;

        var noisy = runs.Where(r => r.IsTurning && r.Flags.Contains(RunFlag.NoiseDominated)).ToHashSet();
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

        var fromA = TrendFit.Root(OnsetRoute.Bottleneck, aPoints);
        if (aPoints.Count == 0 && runs.Any(r => r.Flags.Contains(RunFlag.PeriodsOnly)))
        {
            // Not a shortage of runs but a kind of data: events carry no phase between them. Said once, as a note.
            fromA = fromA with
            {
                Diagnostics = [new Diagnostic(Severity.Info, "bottleneck-not-available",
                    "event times carry periods only: the bottleneck route is not available; the onset comes from the period route")],
            };
        }
        var fromT = PeriodRoute.Estimate(tPoints);

        fromT = WithRunsBelowOnset(runs, fromT, tPoints, diags);
        var bistable = Bistable(runs, fromT, diags);
        var periodPoints = PeriodPoints(runs, noisy);
        var scaling = ScalingFit.Fit(periodPoints);
        var verdict = KindOfOnset(runs, fromA, scaling, periodPoints, diags);
        if (RouteCaveat(verdict) is { } caveat)
        {
            diags.Add(caveat);
        }

        var noiseFree = NoiseFree(runs);
        if (noiseFree)
        {
            diags.Add(new Diagnostic(Severity.Warning, "noise-free-runs",
                "the runs carry no measurement noise (the phase scatters by less than 1e-6 rad about its smooth curve: a simulation without noise, or data smoothed before export): the per-run errors reflect numerical error only, so the intervals are far too narrow and the routes' model error decides; read each onset only to about the difference between the two routes, or analyse the raw recordings"));
        }

        var agreement = TrendFit.Agreement(fromA, fromT, ExplainDisagreement(runs, verdict.Kind, noisy.Count, noiseFree));
        if (!agreement.Consistent && double.IsFinite(agreement.Z))
        {
            diags.Add(new Diagnostic(Severity.Warning, "routes-disagree", string.Create(inv,
                $"the two onset routes disagree (z = {agreement.Z:F1}); most likely: {agreement.Reason}")));
        }

        var misfits = new HashSet<OnsetRoute>();
        foreach (var est in new[] { fromA, fromT })
        {
            if (LawMisfit(est) is { } misfit)
            {
                diags.Add(misfit);
                misfits.Add(est.Route);
            }
        }

        var recommended = RecommendedOnset.Choose(fromA, fromT, agreement, verdict.Kind, misfits);

        var next = new List<NextMeasurement>();
        if (verdict.Kind is OnsetKind.SaddleNodeOnCircle or OnsetKind.Undetermined)
        {
            foreach (var (est, pts) in new[] { (fromA, aPoints), (fromT, tPoints) })
            {
                if (MeasurementPlanner.Suggest(est, pts, periodCurve: fromT.Curve) is { } s)
                {
                    next.Add(s);
                }
            }
        }

        diags.AddRange(fromA.Diagnostics);
        diags.AddRange(fromT.Diagnostics);
        return new AnalysisReport(runs, fromA, fromT, agreement, scaling, verdict, diags)
        {
            ParamUnits = paramUnits,
            Recommended = recommended,
            NextMeasurements = next,
            BistableRuns = bistable,
        };
    }

    /// <summary>
    /// The period route with the runs below onset, when there are such runs near onset on the resting side and their
    /// relaxation rates continue the trend; else <paramref name="fromT"/> as it was.
    /// </summary>
    private static OnsetEstimate WithRunsBelowOnset(IReadOnlyList<RunResult> runs, OnsetEstimate fromT, List<TrendPoint> tPoints, List<Diagnostic> diags)
    {
        var resting = runs.Where(r => !r.IsTurning && r.Relaxation is { } x && x.Rate.StandardError > 0 && x.Rate.StandardError < MaximumRelativeRateError * x.Rate.Value).ToList();
        if (resting.Count == 0 || !fromT.IsAvailable || fromT.Curve is not { } tt || tPoints.Count < MinimumRuns)
        {
            return fromT;
        }

        var side = Math.Sign(tt.Slope(fromT.Value));
        var span = tPoints.Max(p => p.Mu) - tPoints.Min(p => p.Mu);
        var below = resting.Where(r => side * (r.Param - fromT.Value) < 0 && Math.Abs(r.Param - fromT.Value) <= span).ToList();
        if (below.Count == 0)
        {
            return fromT;
        }

        var extra = below.Select(r =>
        {
            var e = r.Relaxation!.SquaredRateOverFourPiSquared;
            return new TrendPoint(r.Param, -e.Value, e.StandardError);
        }).ToList();
        // The square-root law has no place for a relaxation rate (no period): with runs below onset the route
        // uses the polynomial trend through them, which brackets the onset instead of extrapolating to it.
        var withBelow = TrendFit.Root(OnsetRoute.Period, tPoints, belowOnset: extra);
        if (withBelow.IsAvailable && withBelow.Trend is { } wt && extra.All(p => Math.Abs(p.Y - wt.Evaluate(p.Mu)) <= BelowOnsetTrendTolerance * Math.Sqrt((p.StandardError * p.StandardError * Math.Max(wt.ReducedChiSquare, 1)) + wt.Variance(p.Mu))))
        {
            diags.Add(new Diagnostic(Severity.Info, "runs-below-onset", string.Create(CultureInfo.InvariantCulture,
                $"{extra.Count} run(s) below onset enter the period route through their relaxation rate (−κ²/4π² continues T⁻²)")));
            return withBelow;
        }

        diags.Add(new Diagnostic(Severity.Warning, "relaxation-off-trend",
            "the relaxation rates of the runs below onset do not continue the period trend; they are left out (the onset may not be a saddle-node, or they are too far from onset)"));
        return fromT;
    }

    /// <summary>The runs' periods for the scaling law: turning runs with timed periods, noise-dominated ones left out while four remain.</summary>
    private static List<PeriodPoint> PeriodPoints(IReadOnlyList<RunResult> runs, HashSet<RunResult> noisy)
    {
        var periodPoints = runs
            .Where(r => r.IsTurning && !noisy.Contains(r) && r.Period is { } p && double.IsFinite(p.Measured.StandardError))
            .Select(r => new PeriodPoint(r.Param, r.Period!.Measured.Value, r.Period.Measured.StandardError))
            .ToList();
        if (periodPoints.Count < MinimumScalingRuns)
        {
            periodPoints = runs
                .Where(r => r.IsTurning && r.Period is { } p && double.IsFinite(p.Measured.StandardError))
                .Select(r => new PeriodPoint(r.Param, r.Period!.Measured.Value, r.Period.Measured.StandardError))
                .ToList();
        }

        // The runs' errors smoothed across μ, as the period route and the period laws smooth theirs
        // (TrendFit.SmoothErrors): a per-run error from three to five revolutions scatters by tens of percent, and a run
        // with a luckily small one dominates the fit and makes the exponent's interval too narrow. Measured on the
        // calibration matrix (docs/methods.md): the rotor's exponent with three revolutions a run covered ½ in 49/60
        // repeats (RMS z 9.9) with the raw errors, 53/60 (RMS z 6.4) with smoothed ones.
        var smooth = TrendFit.SmoothErrors([.. periodPoints.Select(p => new TrendPoint(p.Mu, p.Period, p.StandardError))]);
        return [.. periodPoints.Select((p, i) => p with { StandardError = smooth[i].StandardError })];
    }

    /// <summary>The kind of onset from the scaling law, the period laws and the bottleneck route's a-trend (<see cref="OnsetKindDecision"/>).</summary>
    private static OnsetVerdict KindOfOnset(IReadOnlyList<RunResult> runs, OnsetEstimate fromA, ScalingResult? scaling, List<PeriodPoint> periodPoints, List<Diagnostic> diags)
    {
        if (scaling is null)
        {
            diags.Add(new Diagnostic(Severity.Info, "no-scaling", "the scaling law needs at least four runs with timed periods"));
            return OnsetKindDecision.WithoutScalingLaw;
        }

        var turning = runs.Where(r => r.IsTurning).ToList();
        var speed = OnsetKindDecision.MinimumSpeed(fromA, turning.Select(r => r.Param).ToList(), turning.Count(r => r.Bottleneck is not null),
            periodsOnly: turning.Count > 0 && turning.All(r => r.Flags.Contains(RunFlag.PeriodsOnly)));
        var verdict = OnsetKindDecision.Decide(scaling, PeriodLaws.Weigh(periodPoints), speed);

        // Words only: where the decision is left open, say so when the periods show a finite rate at onset.
        return verdict.Kind == OnsetKind.Undetermined && FiniteRateAtOnset.Evidence(runs) is { } finite
            ? verdict with { Evidence = verdict.Evidence + finite }
            : verdict;
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
        var limit = LawMisfitFactor * MathNet.Numerics.Distributions.ChiSquared.InvCDF(dof, 0.999) / dof;
        return curve.ReducedChiSquare <= limit ? null : new Diagnostic(Severity.Warning, "law-misfit", string.Create(CultureInfo.InvariantCulture,
            $"the {est.Route.Noun()} route's law ({curve.Description}) misses its runs by far more than their errors allow (χ²/dof = {Numerics.ErrorDigits.Plain(curve.ReducedChiSquare, 3)} on {dof} degrees of freedom, above {Numerics.ErrorDigits.Plain(limit, 3)}): its interval is widened by √(χ²/dof), but a law of the wrong shape can be biased beyond that, so read the interval as too narrow and compare with the other route"));
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

    /// <summary>
    /// The runs that lie where both resting and turning runs were recorded: resting runs on the turning side of the
    /// onset, and turning runs beyond resting ones. Empty when the period route gives no side.
    /// </summary>
    private static FrozenSet<RunResult> Bistable(IReadOnlyList<RunResult> runs, OnsetEstimate fromT, List<Diagnostic> diags)
    {
        if (!fromT.IsAvailable || fromT.Curve is not { } trend)
        {
            return FrozenSet<RunResult>.Empty;
        }

        var side = Math.Sign(trend.Slope(fromT.Value));
        var turningNear = runs.Where(r => r.IsTurning).Select(r => side * r.Param).DefaultIfEmpty(double.PositiveInfinity).Min();
        var resting = runs.Where(r => !r.IsTurning).Select(r => side * r.Param).DefaultIfEmpty(double.NegativeInfinity).Max();
        if (resting <= turningNear)
        {
            return FrozenSet<RunResult>.Empty;
        }

        var found = runs.Where(r =>
        {
            var x = side * r.Param;
            var overlap = r.IsTurning ? x <= resting : x >= turningNear;
            return overlap && !r.Flags.Contains(RunFlag.Bistable);
        }).ToFrozenSet<RunResult>(ReferenceEqualityComparer.Instance);
        diags.Add(new Diagnostic(Severity.Warning, "bistable", $"{found.Count} run(s) lie where both resting and turning runs were recorded: the system is bistable or hysteretic there, and the onset found is that of the turning branch"));
        return found;
    }

    /// <summary>The warning that the routes' model does not hold for the kind of onset found (null when it holds or is unconfirmed).</summary>
    private static Diagnostic? RouteCaveat(OnsetVerdict verdict) => verdict.RouteStatus switch
    {
        RouteStatus.Unreliable => new Diagnostic(Severity.Warning, "route-unreliable", "both onset routes assume a saddle-node on the circle, but " + verdict.RouteStatusReason),
        RouteStatus.NotApplicable => new Diagnostic(Severity.Warning, "route-not-applicable", "the onset routes do not apply: " + verdict.RouteStatusReason),
        _ => null,
    };

    /// <summary>The turning runs usable by at least one route.</summary>
    public static int UsableRuns(IReadOnlyList<RunResult> runs) =>
        runs.Count(r => r.IsTurning && (r.Bottleneck is not null || r.Period is { Revolutions: >= 2 }));

    /// <summary>True when at least <see cref="MinimumRuns"/> turning runs were smoothed and none shows measurement noise.</summary>
    private static bool NoiseFree(IReadOnlyList<RunResult> runs)
    {
        var smoothed = runs.Where(r => r.IsTurning && r.Smoothing is not null).ToList();
        return smoothed.Count >= MinimumRuns && smoothed.All(r => r.Smoothing!.NoiseSd < NoiseFreePhaseSd);
    }

    private static string ExplainDisagreement(IReadOnlyList<RunResult> runs, OnsetKind verdict, int noisy, bool noiseFree)
    {
        var turning = runs.Where(r => r.IsTurning).ToList();
        if (turning.Count == 0)
        {
            return "no turning runs";
        }

        if (noiseFree)
        {
            return "the runs carry no measurement noise, so both intervals reflect numerical error only and are far too narrow: the routes' model error decides";
        }

        var far = turning.Count(r => r.Flags.Contains(RunFlag.FarFromOnset));
        var few = turning.Count(r => r.Flags.Contains(RunFlag.FewRevolutions));
        var mismatch = turning.Count(r => r.Flags.Contains(RunFlag.FieldPeriodMismatch));
        var none = turning.Count(r => r.Flags.Contains(RunFlag.NoBottleneck));
        if (verdict is OnsetKind.Homoclinic or OnsetKind.FinitePeriod)
        {
            var look = verdict == OnsetKind.Homoclinic ? "homoclinic" : "finite-period";
            return $"wrong kind of onset: the runs look {look}, not a saddle-node on the circle, so a and T⁻² need not vanish together";
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
