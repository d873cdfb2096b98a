using System.Globalization;
using MathNet.Numerics.Distributions;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>Diagnostic codes of a comparison that mean "valid input, but the data cannot answer" (exit code 3).</summary>
public static class CompareFailures
{
    /// <summary>Fewer data points than unknowns, or no turning run with a field.</summary>
    public const string TooFewPoints = "compare-too-few-points";

    /// <summary>The model cannot be evaluated or fitted (non-finite values at the start, singular fit).</summary>
    public const string CannotFit = "compare-cannot-fit";
}

/// <summary>
/// Fits a user's phase model θ̇ = f(θ, μ_model; p), μ_model = c₀ + c₁·μ_lab, jointly to the reconstructed fields
/// θ̇(θ) and the measured periods of all runs, and tests whether it holds against the data's own scatter.
/// </summary>
/// <remarks>
/// <para><b>Data.</b> Each field bin gives r = (⟨f⟩_bin − θ̇_bin)/SE_bin, where ⟨f⟩_bin is the model's mean over the
/// bin's phase interval (3-point Gauss–Legendre), matching the field's phase-weighted bin means. Each measured period
/// enters as a frequency, r = (1/T_model − 1/T)/(SE_T/T²), with T_model = ∮dθ/f by the trapezoid rule on 1024 points
/// (exponentially accurate for smooth periodic integrands; Trefethen &amp; Weideman 2014). The frequency goes to 0
/// continuously at the model's onset, so a trial step past it stays finite. The runs' orientation is honoured: a run
/// whose phase was negated to make it increase is compared with −f(−θ).</para>
/// <para><b>Fit.</b> Levenberg–Marquardt (Levenberg 1944; Marquardt 1963) with Marquardt's diagonal scaling, exact
/// Jacobian by forward-mode differentiation of the expression. The weights 1/SE² only shape the fit; its errors are
/// not taken from them.</para>
/// <para><b>Why a parametric bootstrap.</b> The reconstructed field of a run with 5–10 revolutions carries errors
/// that its per-bin SEs do not describe: the bootstrap over so few revolutions underestimates and scatters, the
/// spline couples neighbouring bins, and its smoothing bias is systematic. Jacobian-based standard errors and
/// F or χ² references were measured to be off by factors 1.5–4.5 on correct models. Instead, the whole pipeline is
/// repeated on runs simulated from the fitted model (Efron &amp; Tibshirani 1993, ch. 6; Davison &amp; Hinkley 1997,
/// §2.2 and §4.2): each run is re-simulated at its μ with its own sampling interval and duration, a random initial
/// phase and Gaussian measurement noise of the size its smoothing found, then smoothed (λ by GCV again), binned,
/// bootstrapped and fitted exactly as the data were. A run whose phase diffuses significantly (PhaseDiffusion) gets that
/// diffusion in its replicates as well: left out, it made the SEs 5–20 times too small (D = 0.003, 20 repeats). Cost: (B + 1) × (simulation + analysis of every run + fit).</para>
/// <para><b>Verdict.</b> Monte-Carlo test (Barnard 1963; Davison &amp; Hinkley 1997, §4.2.1) of the statistic
/// Q = Σr² of the fit: p = (1 + #{Q*_b ≥ Q})/(B + 1) over the B replicates, rejected when p ≤ α. It is exact when
/// the fitted model stands for the true one; its remaining error is that of evaluating the null distribution at the
/// estimate instead of the truth. A replicate that fails (a run does not turn, the fit diverges) counts as exceeding
/// Q, which can only make the test more conservative.</para>
/// <para><b>Replicate seed.</b> The replicates' random draws come from <see cref="CompareOptions.Seed"/> mixed with a
/// fingerprint of the data (FNV-1a over the bit patterns of every fitted point; Fowler, Noll &amp; Vo). With 19 replicates
/// the SE is itself an estimate good to about ±17% (1/√(2·18)), and the t quantile on 18 degrees of freedom allows for
/// exactly that, provided the replicates' noise is drawn afresh for each data set. A seed shared by every data set
/// would give every analysis the same 19 noise realisations and with them the same error in its SEs: measured on six
/// runs reaching to μ_lab = 1.15 (20 repeats), one fixed seed made all SEs of a, c0, c1 about 1.6 times too small,
/// while fresh draws per data set gave RMS z of 1.1–1.3 (40 repeats, 59 replicates) and, at the truth itself, a
/// replicate SD of a of 0.00188 (500 replicates) against 0.00171 across 100 independent data sets.</para>
/// <para><b>Pilot stage.</b> The least-squares fit q̂ carries the reconstruction's smoothing bias (of order one to two
/// SEs for runs near onset), and the spread of the estimates depends on where the model is simulated: replicates drawn
/// at q̂ itself spread about 12% less than real repeats do (six runs reaching to μ_lab = 1.15, 100 repeats). So a pilot
/// bootstrap (<see cref="CompareOptions.PilotReplicates"/>, default 9) first estimates the bias at q̂, and the main
/// stage is simulated at q̂ − b_pilot, a model nearer the truth; its bias and spread are the ones used below. This is
/// the bias-corrected centring of the parametric bootstrap (Efron &amp; Tibshirani 1993, §10.6 for the bias estimate;
/// one cheap step of the iterated bootstrap, Davison &amp; Hinkley 1997, §3.9 — section number from memory).</para>
/// <para><b>Errors.</b> Bootstrap bias b = mean(q*) − q_c is removed from the fit, q̃ = q̂ − b, where q_c is the centre
/// of the main stage (Efron &amp; Tibshirani 1993, §10.6; it carries the smoothing bias of the reconstruction). SE = sd(q*)·√(1 + 1/B) (the bias estimate's own variance
/// added); 95% interval q̃ ± t₀.₉₇₅,B−1·SE, the t quantile because sd(q*) rests on B − 1 degrees of freedom. The
/// onset (the μ_lab where min_θ f reaches 0, by bracketing and regula falsi, Illinois variant; Dowell &amp; Jarratt
/// 1971) is treated alike from the replicates' onsets.</para>
/// </remarks>
public static class ModelComparer
{
    private const int PeriodGrid = 1024;
    private const int OnsetGrid = 96;
    private static readonly double[] GaussNodes = [-Math.Sqrt(0.6), 0.0, Math.Sqrt(0.6)];
    private static readonly double[] GaussWeights = [5.0 / 18.0, 8.0 / 18.0, 5.0 / 18.0];

    /// <summary>Compares <paramref name="model"/> with the analysed runs.</summary>
    /// <param name="runs">Run results (runs that do not turn or have no field are left out).</param>
    /// <param name="model">The parsed model expression.</param>
    /// <param name="options">Options; defaults when null.</param>
    /// <returns>The comparison, or the diagnostics that explain why there is none.</returns>
    public static Loaded<ModelComparison> Compare(IReadOnlyList<RunResult> runs, ModelExpression model, CompareOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(runs);
        ArgumentNullException.ThrowIfNull(model);
        options ??= CompareOptions.Default;
        var problems = options.Validate().ToList();
        foreach (var name in options.Start.Keys.Concat(options.Fixed.Keys))
        {
            if (!model.Parameters.Contains(name))
            {
                problems.Add(model.Parameters.Count == 0
                    ? $"'{name}' is not a parameter: the expression has no free parameters."
                    : $"'{name}' is not a parameter of the expression; its parameters are {string.Join(", ", model.Parameters)}.");
            }
        }

        if (problems.Count > 0)
        {
            return new Loaded<ModelComparison>(null, [.. problems.Select(p => new Diagnostic(Severity.Error, "bad-option", p))]);
        }

        var problem = Problem.Build(runs, model, options, null);
        var notes = new List<Diagnostic>();
        if (!model.UsesMu)
        {
            notes.Add(new Diagnostic(Severity.Warning, "no-mu",
                "the expression does not contain mu: one field is fitted to every run, the map c0 + c1·μ is not used and there is no onset"));
        }

        if (problem.RunCount == 0)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.TooFewPoints,
                "no run turns with a reconstructed field: there is nothing to compare the model with"));
        }

        if (problem.Points <= problem.FreeCount)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.TooFewPoints, string.Create(CultureInfo.InvariantCulture,
                $"{problem.Points} data points cannot determine {problem.FreeCount} unknowns: add runs or hold parameters fixed")));
        }

        var fit = LevenbergMarquardt(problem, problem.StartVector(), options.MaxIterations);
        if (fit is null)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.CannotFit,
                "the model gives no finite value at the starting parameters (e.g. log or sqrt of a negative number, or a division by zero): give starting values with --start"));
        }

        var comparison = Finish(problem, model, options, fit, notes);
        return new Loaded<ModelComparison>(comparison, comparison.Diagnostics);
    }

    private static ModelComparison Finish(Problem problem, ModelExpression model, CompareOptions options, FitState fit, List<Diagnostic> notes)
    {
        var ic = CultureInfo.InvariantCulture;
        if (!fit.Converged)
        {
            notes.Add(new Diagnostic(Severity.Warning, "fit-not-converged", string.Create(ic,
                $"the fit stopped after {fit.Iterations} iterations without converging: the estimates may not be the best; try other --start values")));
        }

        var full = problem.Expand(fit.Parameters);
        var observed = Misfit.Of(problem, fit.Residuals, options.Regions);
        var finder = model.UsesMu ? new OnsetFinder(problem) : null;
        var onsetHat = finder?.Find(full) ?? double.NaN;

        // A model that stops where a run turns contradicts that run outright; there is nothing to simulate there.
        var stops = problem.Runs.Where((run, i) => !problem.TurnsAt(full, i)).ToList();
        var seed = problem.Fingerprint(options.Seed);
        var centreFree = fit.Parameters;
        if (stops.Count == 0 && options.CorrectBias && options.PilotReplicates > 0)
        {
            // Pilot stage: the bias at the least-squares fit, to centre the main stage nearer the truth.
            var pilot = Bootstrap(problem, full, finder, options, options.PilotReplicates, GaussianSource.DeriveSeed(seed, 1));
            var pilotOk = pilot.Where(x => x is not null).Select(x => x!).ToList();
            if (pilotOk.Count >= 2)
            {
                var shifted = fit.Parameters.Select((q, u) => q - (pilotOk.Average(x => x.Free[u]) - q)).ToArray();
                var shiftedFull = problem.Expand(shifted);
                if (Enumerable.Range(0, problem.RunCount).All(i => problem.TurnsAt(shiftedFull, i)))
                {
                    centreFree = shifted;
                }
            }
        }

        var centre = problem.Expand(centreFree);
        var onsetCentre = finder?.Find(centre) ?? double.NaN;
        var replicates = stops.Count == 0 ? Bootstrap(problem, centre, finder, options, options.Replicates, seed) : [];
        var ok = replicates.Where(x => x is not null).Select(x => x!).ToList();
        var failed = replicates.Length - ok.Count;

        var k = problem.FreeCount;
        var t = ok.Count >= 2 ? StudentT.InvCDF(0.0, 1.0, ok.Count - 1, 0.975) : double.NaN;
        var inflate = Math.Sqrt(1.0 + (options.CorrectBias ? 1.0 / Math.Max(ok.Count, 1) : 0.0));
        var freeValue = (double[])fit.Parameters.Clone();
        var freeSe = new double[k];
        var freeBias = new double[k];
        for (var u = 0; u < k; u++)
        {
            var draws = ok.Select(x => x.Free[u]).ToList();
            freeSe[u] = ok.Count >= 2 ? inflate * Std(draws) : double.NaN;
            if (options.CorrectBias && ok.Count >= 2)
            {
                freeBias[u] = draws.Average() - centreFree[u];
                freeValue[u] -= freeBias[u];
            }
        }

        var fullValue = problem.Expand(freeValue);
        var pCount = model.Parameters.Count;
        FittedParameter Parameter(string name, int f)
        {
            var free = problem.FreeIndexOf(f);
            return free < 0
                ? new FittedParameter(name, fullValue[f], 0.0, true)
                : new FittedParameter(name, fullValue[f], freeSe[free], false) { Quantile = t, Bias = freeBias[free] };
        }

        var parameters = Enumerable.Range(0, pCount).Select(i => Parameter(model.Parameters[i], i)).ToList();
        var offset = Parameter("c0", pCount);
        var scaleMap = Parameter("c1", pCount + 1);

        // Onset and its interval, from the replicates' onsets alike.
        var onset = new Estimate(onsetHat, double.NaN);
        var ci = new Interval(double.NaN, double.NaN);
        if (finder is not null && double.IsFinite(onsetHat) && ok.Count >= 2)
        {
            var onsets = ok.Select(x => x.Onset).Where(double.IsFinite).ToList();
            if (onsets.Count == ok.Count)
            {
                var value = options.CorrectBias ? onsetHat - (onsets.Average() - onsetCentre) : onsetHat;
                var se = inflate * Std(onsets);
                onset = new Estimate(value, se);
                ci = new Interval(value - (t * se), value + (t * se));
            }
            else
            {
                notes.Add(new Diagnostic(Severity.Warning, "onset-unbounded", string.Create(ic,
                    $"{ok.Count - onsets.Count} of {ok.Count} replicates put no onset within reach: the onset has no interval")));
            }
        }
        else if (finder is not null && !double.IsFinite(onsetHat))
        {
            notes.Add(new Diagnostic(Severity.Warning, "no-onset", "the fitted model's minimum speed does not reach zero for any μ in reach: no onset"));
        }

        // Verdict.
        var exceed = ok.Count(x => x.Statistic >= observed.Total) + failed;
        var p = replicates.Length > 0 ? (1.0 + exceed) / (replicates.Length + 1.0) : double.NaN;
        var consistent = stops.Count == 0 && p > options.Significance;
        var expected = ok.Count > 0 ? ok.Average(x => x.Misfit.Total) : double.NaN;
        if (failed > 0)
        {
            notes.Add(new Diagnostic(Severity.Warning, "replicates-failed", string.Create(ic,
                $"{failed} of {replicates.Length} replicates simulated from the fitted model could not be analysed or fitted; they count against the model in the test and are left out of the standard errors")));
        }

        var (runMisfits, regions) = Summaries(problem, observed, ok);
        var worstRuns = runMisfits.OrderByDescending(m => m.Ratio).Take(options.WorstCount).ToList();
        var worstRegions = regions.Where(g => g.Points > 0).OrderByDescending(g => g.Ratio).Take(options.WorstCount).ToList();
        if (stops.Count > 0)
        {
            notes.Add(new Diagnostic(Severity.Warning, "model-stops", string.Create(ic,
                $"the fitted model stops (its speed reaches zero) at μ = {string.Join(", ", stops.Select(s => s.MuLab.ToString("G6", ic)))}, where the runs turn: the model contradicts them")));
        }
        else if (!consistent)
        {
            notes.Add(new Diagnostic(Severity.Warning, "model-rejected", string.Create(ic,
                $"the model does not fit within the data's own scatter: Q = {observed.Total:G4} is exceeded by {exceed} of {replicates.Length} run sets simulated from the fitted model (p = {p:G2}); worst run {worstRuns[0].File} (μ = {worstRuns[0].Param:G6}), worst phase region [{worstRegions[0].From:F2}, {worstRegions[0].To:F2})")));
        }

        return new ModelComparison(
            model.Text, parameters, offset, scaleMap, onset, ci, observed.Total, expected, p, consistent, problem.Points,
            runMisfits, regions, worstRuns, worstRegions, notes)
        {
            ReplicateStatistics = [.. ok.Select(x => x.Misfit.Total)],
            FailedReplicates = failed,
            Iterations = fit.Iterations,
        };
    }

    private static double Std(IReadOnlyList<double> xs) => Field.PhaseFieldEstimator.StandardDeviation(xs);

    /// <summary>Sums of squared residuals: in total, per run (fields and period), per run's field, per phase region.</summary>
    private sealed record Misfit(double Total, double[] Run, double[] RunField, int[] RunFieldPoints, double[] RunSum, double[] Period, double[] Region, double[] RegionSum, int[] RegionPoints)
    {
        public static Misfit Of(Problem problem, double[] r, int regionCount)
        {
            var n = problem.Runs.Count;
            var run = new double[n];
            var runField = new double[n];
            var runPoints = new int[n];
            var runSum = new double[n];
            var period = new double[n];
            var region = new double[regionCount];
            var regionSum = new double[regionCount];
            var regionPoints = new int[regionCount];
            var width = 2.0 * Math.PI / regionCount;
            for (var i = 0; i < n; i++)
            {
                var data = problem.Runs[i];
                foreach (var point in data.FieldIndexByBin)
                {
                    if (point < 0)
                    {
                        continue;
                    }

                    var sq = r[point] * r[point];
                    runField[i] += sq;
                    runSum[i] += r[point];
                    runPoints[i]++;
                    var g = Math.Min((int)(problem.FieldCentre(point) / width), regionCount - 1);
                    region[g] += sq;
                    regionSum[g] += r[point];
                    regionPoints[g]++;
                }

                period[i] = data.PeriodIndex >= 0 ? r[data.PeriodIndex] : double.NaN;
                run[i] = runField[i] + (data.PeriodIndex >= 0 ? period[i] * period[i] : 0.0);
            }

            return new Misfit(r.Sum(x => x * x), run, runField, runPoints, runSum, period, region, regionSum, regionPoints);
        }
    }

    private sealed record Replicate(double Statistic, double[] Free, double Onset, Misfit Misfit);

    /// <summary>B replicates of the whole pipeline from the fitted model (see remarks); null where one failed.</summary>
    private static Replicate?[] Bootstrap(Problem problem, double[] full, OnsetFinder? finder, CompareOptions options, int count, int seed)
    {
        var results = new Replicate?[count];
        var parallel = new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, options.Parallelism) };
        Parallel.For(0, count, parallel, b => results[b] = OneReplicate(problem, full, finder, options, seed, b));
        return results;
    }

    private static Replicate? OneReplicate(Problem problem, double[] full, OnsetFinder? finder, CompareOptions options, int seed, int b)
    {
        var pCount = problem.ParameterCount;
        var pars = full[..pCount];
        var evaluator = problem.Model.CreateEvaluator();
        var fitted = PhaseModel.Create("fitted", problem.Model.Text, (theta, mu) => evaluator.Evaluate(theta, mu, pars, []));
        var runs = new List<RunResult>(problem.RunCount);
        for (var i = 0; i < problem.RunCount; i++)
        {
            var source = problem.Source(i);
            var dt = source.Duration / Math.Max(source.Samples - 1, 1);
            var (sigma, diffusion) = ReplicateNoise(source);
            SimulatedRun sim;
            try
            {
                sim = Simulator.Run(fitted, new SimulationOptions
                {
                    Mu = full[pCount] + (full[pCount + 1] * source.Param),
                    Revolutions = (int)Math.Min(Math.Ceiling(source.Turns) + 2, int.MaxValue),
                    SamplingInterval = dt,
                    MaxDuration = source.Duration,
                    MeasurementNoise = double.IsFinite(sigma) ? sigma : 0.0,
                    DynamicNoise = diffusion,
                    Seed = GaussianSource.DeriveSeed(GaussianSource.DeriveSeed(seed, b), i),
                });
            }
            catch (ArgumentException)
            {
                return null; // the fitted model cannot be simulated here (e.g. too stiff)
            }

            var recording = new PhaseRecording(source.File, sim.Time, sim.Phase, [0]);
            var rebuilt = RunAnalyzer.Analyze(Trajectory.FromRecording(recording), source.Param, source.File, source.Label, options.Analysis);
            if (!rebuilt.IsTurning || rebuilt.Field is null)
            {
                return null;
            }

            runs.Add(rebuilt);
        }

        var replica = Problem.Build(runs, problem.Model, options, full);
        if (replica.RunCount != problem.RunCount || replica.Points <= replica.FreeCount)
        {
            return null;
        }

        var fit = LevenbergMarquardt(replica, replica.StartVector(), options.MaxIterations);
        if (fit is null || fit.Parameters.Any(x => !double.IsFinite(x)))
        {
            return null;
        }

        var misfit = Misfit.Of(replica, fit.Residuals, options.Regions);
        var onset = finder?.Find(replica.Expand(fit.Parameters)) ?? double.NaN;
        return new Replicate(misfit.Total, fit.Parameters, onset, misfit);
    }

    /// <summary>
    /// The noise a replicate of <paramref name="source"/> gets: phase diffusion D when the run's estimate is more than two
    /// standard errors above zero (PhaseDiffusion: lag-k second differences), with the measurement noise σ of the same
    /// fit; otherwise no diffusion and the σ the smoothing found (whose residuals then hold measurement noise only).
    /// </summary>
    internal static (double MeasurementSd, double Diffusion) ReplicateNoise(RunResult source)
    {
        var smoothing = source.Smoothing?.NoiseSd ?? 0.0;
        if (source.Noise is { } noise && double.IsFinite(noise.Diffusion.Value) && noise.Diffusion.Value > 2.0 * noise.Diffusion.StandardError
            && double.IsFinite(noise.MeasurementSd) && noise.MeasurementSd >= 0.0)
        {
            return (noise.MeasurementSd, noise.Diffusion.Value);
        }

        return (smoothing, 0.0);
    }

    /// <summary>
    /// Per-run and per-region summaries. The expectation of each sum for a correct model is the mean of the same sum
    /// over the replicates (per point for regions, whose bins may differ in number); mean residuals are expressed in
    /// units of the replicates' root-mean-square residual, the reconstruction's actual scatter.
    /// </summary>
    private static (List<RunMisfit> Runs, List<RegionMisfit> Regions) Summaries(Problem problem, Misfit observed, List<Replicate> ok)
    {
        var runs = new List<RunMisfit>();
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var data = problem.Runs[i];
            var points = observed.RunFieldPoints[i] + (data.PeriodIndex >= 0 ? 1 : 0);
            var expected = ok.Count > 0 ? ok.Average(x => x.Misfit.Run[i]) : points;
            var perPoint = ok.Count > 0 ? ok.Average(x => x.Misfit.RunField[i] / Math.Max(x.Misfit.RunFieldPoints[i], 1)) : 1.0;
            var mean = observed.RunFieldPoints[i] > 0 ? observed.RunSum[i] / observed.RunFieldPoints[i] / Math.Sqrt(perPoint) : double.NaN;
            var periodScale = ok.Count > 0 && data.PeriodIndex >= 0 ? Math.Sqrt(ok.Average(x => x.Misfit.Period[i] * x.Misfit.Period[i])) : 1.0;
            var periodResidual = observed.Period[i] / periodScale;
            runs.Add(new RunMisfit(data.File, data.MuLab, points, observed.Run[i], expected, mean, periodResidual));
        }

        var count = observed.Region.Length;
        var width = 2.0 * Math.PI / count;
        var regions = new List<RegionMisfit>();
        for (var g = 0; g < count; g++)
        {
            var n = observed.RegionPoints[g];
            var perPoint = ok.Count > 0 ? ok.Average(x => x.Misfit.Region[g] / Math.Max(x.Misfit.RegionPoints[g], 1)) : 1.0;
            regions.Add(new RegionMisfit(g * width, (g + 1) * width, n, observed.Region[g], n * perPoint, n > 0 ? observed.RegionSum[g] / n / Math.Sqrt(perPoint) : double.NaN));
        }

        return (runs, regions);
    }

    private sealed record FitState(double[] Parameters, double[] Residuals, double[,] Jacobian, int Iterations, bool Converged);

    /// <summary>
    /// Levenberg (1944) – Marquardt (1963): solve (JᵀJ + λ·diag JᵀJ)δ = −Jᵀr; accept δ when Σr² falls (then λ ÷ 3),
    /// else λ × 4. Stops when the relative fall of Σr² or the relative step is below 1e-10.
    /// </summary>
    private static FitState? LevenbergMarquardt(Problem problem, double[] start, int maxIterations)
    {
        var k = start.Length;
        var q = (double[])start.Clone();
        if (!problem.Evaluate(q, out var r, out var jac))
        {
            return null;
        }

        var cost = r.Sum(x => x * x);
        var lambda = 1e-3;
        var iterations = 0;
        var converged = k == 0;
        while (!converged && iterations < maxIterations)
        {
            iterations++;
            var a = new double[k, k];
            var g = new double[k];
            for (var i = 0; i < r.Length; i++)
            {
                for (var u = 0; u < k; u++)
                {
                    g[u] += jac[i, u] * r[i];
                    for (var v = 0; v <= u; v++)
                    {
                        a[u, v] += jac[i, u] * jac[i, v];
                    }
                }
            }

            for (var u = 0; u < k; u++)
            {
                for (var v = 0; v < u; v++)
                {
                    a[v, u] = a[u, v];
                }
            }

            var accepted = false;
            while (lambda < 1e16)
            {
                var damped = (double[,])a.Clone();
                for (var u = 0; u < k; u++)
                {
                    damped[u, u] += lambda * Math.Max(a[u, u], 1e-12);
                }

                var l = SmallDense.Cholesky(damped);
                if (l is null)
                {
                    lambda *= 4.0;
                    continue;
                }

                var step = SmallDense.Solve(l, g);
                var trial = new double[k];
                var relStep = 0.0;
                for (var u = 0; u < k; u++)
                {
                    trial[u] = q[u] - step[u];
                    relStep = Math.Max(relStep, Math.Abs(step[u]) / (Math.Abs(q[u]) + 1e-8));
                }

                if (problem.Evaluate(trial, out var rt, out var jt))
                {
                    var trialCost = rt.Sum(x => x * x);
                    if (trialCost <= cost)
                    {
                        var fall = (cost - trialCost) / Math.Max(cost, 1e-300);
                        q = trial;
                        r = rt;
                        jac = jt;
                        cost = trialCost;
                        lambda = Math.Max(lambda / 3.0, 1e-12);
                        accepted = true;
                        converged = fall < 1e-10 || relStep < 1e-10;
                        break;
                    }
                }

                if (relStep < 1e-12)
                {
                    converged = true;
                    break;
                }

                lambda *= 4.0;
            }

            if (!accepted && !converged)
            {
                // No step lowers Σr² at any damping: a (possibly flat) minimum.
                converged = true;
            }
        }

        return new FitState(q, r, jac, iterations, converged);
    }

    /// <summary>The least-squares problem: data points, which parameters are free, residuals and Jacobian.</summary>
    private sealed class Problem
    {
        private readonly ModelExpression model;
        private readonly double[] fullStart;
        private readonly int[] freeToFull;
        private readonly int[] fullToFree;
        private readonly List<(int Run, double Centre, double HalfWidth, double Value, double Se)> bins = [];
        private readonly List<(int Run, double Nu, double Se)> periods = [];
        private readonly List<RunResult> sources = [];
        [ThreadStatic]
        private static ModelExpression.Evaluator? cachedEvaluator;
        [ThreadStatic]
        private static ModelExpression? cachedOwner;

        private Problem(ModelExpression model, double[] fullStart, bool[] free)
        {
            this.model = model;
            this.fullStart = fullStart;
            freeToFull = [.. Enumerable.Range(0, free.Length).Where(i => free[i])];
            fullToFree = new int[free.Length];
            Array.Fill(fullToFree, -1);
            for (var i = 0; i < freeToFull.Length; i++)
            {
                fullToFree[freeToFull[i]] = i;
            }
        }

        public List<RunData> Runs { get; } = [];

        public int RunCount => Runs.Count;

        public int FreeCount => freeToFull.Length;

        public int FullCount => fullStart.Length;

        public int Points => bins.Count + periods.Count;

        public int ParameterCount => model.Parameters.Count;

        public ModelExpression Model => model;

        /// <summary>The problem for <paramref name="runs"/>; <paramref name="startFull"/> (all parameters, then c0, c1) overrides the options' starting values.</summary>
        public static Problem Build(IReadOnlyList<RunResult> runs, ModelExpression model, CompareOptions options, double[]? startFull)
        {
            var pCount = model.Parameters.Count;
            var start = new double[pCount + 2];
            var free = new bool[pCount + 2];
            for (var i = 0; i < pCount; i++)
            {
                var name = model.Parameters[i];
                free[i] = !options.Fixed.ContainsKey(name);
                start[i] = options.Fixed.TryGetValue(name, out var v) ? v : options.Start.TryGetValue(name, out var s) ? s : 1.0;
            }

            start[pCount] = options.FixedOffset ?? (model.UsesMu ? options.StartOffset : 0.0);
            start[pCount + 1] = options.FixedScale ?? (model.UsesMu ? options.StartScale : 1.0);
            free[pCount] = options.FixedOffset is null && model.UsesMu;
            free[pCount + 1] = options.FixedScale is null && model.UsesMu;
            var problem = new Problem(model, startFull is null ? start : (double[])startFull.Clone(), free);
            var used = new List<RunResult>();
            foreach (var run in runs)
            {
                if (!run.IsTurning || run.Field is not { } f)
                {
                    continue;
                }

                var index = problem.Runs.Count;
                var byBin = new int[f.Centres.Length];
                Array.Fill(byBin, -1);
                for (var j = 0; j < f.Centres.Length; j++)
                {
                    var se = f.StandardError[j];
                    if (double.IsFinite(f.Velocity[j]) && double.IsFinite(se) && se > 0)
                    {
                        byBin[j] = problem.bins.Count;
                        problem.bins.Add((index, f.Centres[j], 0.5 * f.BinWidth, f.Velocity[j], se));
                    }
                }

                used.Add(run);
                problem.Runs.Add(new RunData(run.File, run.Param, run.Direction < 0 ? -1 : 1, f.Centres.Length, byBin, byBin.Count(b => b >= 0)));
            }

            problem.sources.AddRange(used);

            // Period points are numbered after all field points.
            for (var i = 0; i < problem.Runs.Count; i++)
            {
                var run = used[i];
                if (options.UsePeriods && run.Period?.Measured is { } t && t.Value > 0 && double.IsFinite(t.Value) && t.StandardError > 0 && double.IsFinite(t.StandardError))
                {
                    problem.Runs[i] = problem.Runs[i] with { PeriodIndex = problem.bins.Count + problem.periods.Count };
                    problem.periods.Add((i, 1.0 / t.Value, t.StandardError / (t.Value * t.Value)));
                }
            }

            return problem;
        }

        public int FieldPointCount => bins.Count;

        /// <summary>
        /// <paramref name="seed"/> mixed with a fingerprint of the fitted data: FNV-1a, 64 bits (Fowler, Noll &amp; Vo;
        /// offset basis 14695981039346656037, prime 1099511628211), over the bit patterns of every point's phase, value
        /// and standard error and every run's μ, folded to a seed by SplitMix64. Deterministic across processes, unlike
        /// <see cref="HashCode"/>.
        /// </summary>
        public int Fingerprint(int seed)
        {
            var h = 14695981039346656037UL;
            void Mix(double x)
            {
                var bits = (ulong)BitConverter.DoubleToInt64Bits(x);
                for (var k = 0; k < 8; k++)
                {
                    h = (h ^ ((bits >> (8 * k)) & 0xFF)) * 1099511628211UL;
                }
            }

            foreach (var run in Runs)
            {
                Mix(run.MuLab);
            }

            foreach (var (run, centre, _, value, se) in bins)
            {
                Mix(run);
                Mix(centre);
                Mix(value);
                Mix(se);
            }

            foreach (var (run, nu, se) in periods)
            {
                Mix(run);
                Mix(nu);
                Mix(se);
            }

            return GaussianSource.DeriveSeed(GaussianSource.DeriveSeed(seed, (int)(h >> 32)), (int)h);
        }

        public RunResult Source(int run) => sources[run];

        /// <summary>True when the model, at the full parameters, keeps turning in the run's direction at the run's μ.</summary>
        public bool TurnsAt(double[] full, int run)
        {
            var data = Runs[run];
            var pars = full.AsSpan(0, ParameterCount);
            var muModel = full[ParameterCount] + (full[ParameterCount + 1] * data.MuLab);
            var eval = Evaluator();
            for (var g = 0; g < PeriodGrid; g++)
            {
                if (!(data.Sign * eval.Evaluate(2.0 * Math.PI * g / PeriodGrid, muModel, pars, []) > 0.0))
                {
                    return false;
                }
            }

            return true;
        }

        public double[] StartVector() => [.. freeToFull.Select(i => fullStart[i])];

        public int FreeIndexOf(int full) => fullToFree[full];

        public double FieldCentre(int point) => bins[point].Centre;

        public double[] Expand(ReadOnlySpan<double> free)
        {
            var full = (double[])fullStart.Clone();
            for (var i = 0; i < freeToFull.Length; i++)
            {
                full[freeToFull[i]] = free[i];
            }

            return full;
        }

        public ModelExpression.Evaluator Evaluator()
        {
            if (cachedEvaluator is null || !ReferenceEquals(cachedOwner, model))
            {
                cachedEvaluator = model.CreateEvaluator();
                cachedOwner = model;
            }

            return cachedEvaluator;
        }

        /// <summary>Residuals and Jacobian (free columns) at the free parameters; false when any value is not finite.</summary>
        public bool Evaluate(double[] free, out double[] residuals, out double[,] jacobian)
        {
            var full = Expand(free);
            var pCount = ParameterCount;
            var pars = full.AsSpan(0, pCount);
            var c0 = full[pCount];
            var c1 = full[pCount + 1];
            var eval = Evaluator();
            var grad = new double[pCount + 1];
            var acc = new double[pCount + 1];
            residuals = new double[Points];
            jacobian = new double[Points, FreeCount];
            for (var i = 0; i < bins.Count; i++)
            {
                var (run, centre, half, value, se) = bins[i];
                var data = Runs[run];
                var s = data.Sign;
                var muModel = c0 + (c1 * data.MuLab);
                var mean = 0.0;
                Array.Clear(acc);
                for (var g = 0; g < GaussNodes.Length; g++)
                {
                    var f = s * eval.Evaluate(s * (centre + (half * GaussNodes[g])), muModel, pars, grad);
                    mean += GaussWeights[g] * f;
                    for (var u = 0; u <= pCount; u++)
                    {
                        acc[u] += GaussWeights[g] * s * grad[u];
                    }
                }

                residuals[i] = (mean - value) / se;
                if (!double.IsFinite(residuals[i]))
                {
                    return false;
                }

                FillRow(jacobian, i, acc, data.MuLab, se);
            }

            var h = 2.0 * Math.PI / PeriodGrid;
            for (var p = 0; p < periods.Count; p++)
            {
                var (run, nu, se) = periods[p];
                var data = Runs[run];
                var s = data.Sign;
                var muModel = c0 + (c1 * data.MuLab);
                var period = 0.0;
                Array.Clear(acc);
                var turns = true;
                for (var g = 0; g < PeriodGrid; g++)
                {
                    var f = s * eval.Evaluate(s * (g + 0.5) * h, muModel, pars, grad);
                    if (!double.IsFinite(f))
                    {
                        return false;
                    }

                    if (f <= 0.0)
                    {
                        turns = false;
                        break;
                    }

                    period += h / f;
                    for (var u = 0; u <= pCount; u++)
                    {
                        acc[u] -= h * s * grad[u] / (f * f);
                    }
                }

                var row = bins.Count + p;
                if (!turns)
                {
                    // The model does not turn here: frequency 0, locally flat.
                    residuals[row] = -nu / se;
                    continue;
                }

                var modelNu = 1.0 / period;
                residuals[row] = (modelNu - nu) / se;
                for (var u = 0; u <= pCount; u++)
                {
                    acc[u] *= -modelNu * modelNu;
                }

                FillRow(jacobian, row, acc, data.MuLab, se);
            }

            return true;
        }

        /// <summary>Model value of θ̇ (in the run's orientation) at one phase, for the onset search.</summary>
        public static double Speed(ModelExpression.Evaluator eval, double theta, double muModel, ReadOnlySpan<double> pars) =>
            eval.Evaluate(theta, muModel, pars, []);

        private void FillRow(double[,] jacobian, int row, double[] d, double muLab, double se)
        {
            var pCount = ParameterCount;
            for (var u = 0; u < pCount; u++)
            {
                if (fullToFree[u] >= 0)
                {
                    jacobian[row, fullToFree[u]] = d[u] / se;
                }
            }

            if (fullToFree[pCount] >= 0)
            {
                jacobian[row, fullToFree[pCount]] = d[pCount] / se;
            }

            if (fullToFree[pCount + 1] >= 0)
            {
                jacobian[row, fullToFree[pCount + 1]] = d[pCount] * muLab / se;
            }
        }
    }

    private sealed record RunData(string File, double MuLab, int Sign, int Bins, int[] FieldIndexByBin, int FieldPoints)
    {
        public int PeriodIndex { get; init; } = -1;
    }

    /// <summary>
    /// The lab parameter at which the model's minimum speed over θ reaches zero. The sign of turning is that of the
    /// runs (the model's own θ is used: min over θ of s·f(sθ) equals min over θ of s·f(θ)).
    /// </summary>
    private sealed class OnsetFinder(Problem problem)
    {
        private readonly double[] labs = [.. problem.Runs.Select(r => r.MuLab).Distinct().Order()];
        private readonly int sign = problem.Runs.Sum(r => r.Sign) >= 0 ? 1 : -1;

        public double Find(double[] full)
        {
            var pCount = problem.ParameterCount;
            var pars = full[..pCount];
            var c0 = full[pCount];
            var c1 = full[pCount + 1];
            var eval = problem.Evaluator();
            double G(double muLab) => MinSpeed(eval, c0 + (c1 * muLab), pars);

            var lo = labs[0];
            var hi = labs[^1];
            var glo = G(lo);
            var ghi = G(hi);
            if (!double.IsFinite(glo) || !double.IsFinite(ghi))
            {
                return double.NaN;
            }

            // A crossing between two runs.
            var prevX = lo;
            var prevG = glo;
            for (var i = 1; i < labs.Length; i++)
            {
                var g = i == labs.Length - 1 ? ghi : G(labs[i]);
                if (Math.Sign(g) != Math.Sign(prevG))
                {
                    return Root(G, prevX, prevG, labs[i], g);
                }

                prevX = labs[i];
                prevG = g;
            }

            if (glo <= 0 && ghi <= 0)
            {
                return double.NaN;
            }

            // Extend outwards on the slower side, doubling the step.
            var span = Math.Max(hi - lo, 1e-3 * Math.Max(Math.Abs(hi), 1.0));
            var down = glo < ghi;
            var x0 = down ? lo : hi;
            var g0 = down ? glo : ghi;
            for (var k = 0; k < 30; k++)
            {
                var x1 = down ? x0 - span : x0 + span;
                var g1 = G(x1);
                if (!double.IsFinite(g1))
                {
                    return double.NaN;
                }

                if (g1 <= 0)
                {
                    return Root(G, x0, g0, x1, g1);
                }

                if (g1 >= g0)
                {
                    return double.NaN; // the minimum speed stops falling: no onset on this side
                }

                x0 = x1;
                g0 = g1;
                span *= 2.0;
            }

            return double.NaN;
        }

        /// <summary>min over θ of the run-oriented speed: a grid of 360 phases, then Brent's minimiser on the best cell.</summary>
        private double MinSpeed(ModelExpression.Evaluator eval, double muModel, double[] pars)
        {
            var h = 2.0 * Math.PI / OnsetGrid;
            var best = double.PositiveInfinity;
            var at = 0;
            for (var i = 0; i < OnsetGrid; i++)
            {
                var f = sign * Problem.Speed(eval, i * h, muModel, pars);
                if (!double.IsFinite(f))
                {
                    return double.NaN;
                }

                if (f < best)
                {
                    best = f;
                    at = i;
                }
            }

            var x = at * h;
            double F(double t) => sign * Problem.Speed(eval, t, muModel, pars);
            var refined = F(Smoothing.Brent.Minimize(F, x - h, x + h, x, best, 1e-10));
            return double.IsFinite(refined) ? Math.Min(best, refined) : best;
        }

        /// <summary>Regula falsi, Illinois variant (Dowell &amp; Jarratt 1971), on a bracket with a sign change.</summary>
        private static double Root(Func<double, double> g, double a, double ga, double b, double gb)
        {
            if (ga == 0)
            {
                return a;
            }

            if (gb == 0)
            {
                return b;
            }

            var side = 0;
            for (var i = 0; i < 100; i++)
            {
                var c = ((a * gb) - (b * ga)) / (gb - ga);
                var gc = g(c);
                if (!double.IsFinite(gc))
                {
                    return double.NaN;
                }

                if (Math.Abs(b - a) < 1e-12 * Math.Max(1.0, Math.Abs(c)) || gc == 0)
                {
                    return c;
                }

                if (Math.Sign(gc) == Math.Sign(gb))
                {
                    b = c;
                    gb = gc;
                    if (side == -1)
                    {
                        ga *= 0.5;
                    }

                    side = -1;
                }
                else
                {
                    a = c;
                    ga = gc;
                    if (side == 1)
                    {
                        gb *= 0.5;
                    }

                    side = 1;
                }
            }

            return ((a * gb) - (b * ga)) / (gb - ga);
        }
    }
}
