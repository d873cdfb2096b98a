using System.Globalization;
using MathNet.Numerics.Distributions;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Numerics;
using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>Error codes of a planar comparison that mean "these runs cannot be compared with a system this way" (exit code 2).</summary>
public static class PlanarRefusals
{
    /// <summary>The runs are not single-signal recordings (phase, positions or event times).</summary>
    public const string NotSignal = "system-needs-signal";
}

/// <summary>
/// Compares a planar reduced model (<see cref="PlanarModel"/>) with runs recorded as one signal of its variables.
/// </summary>
/// <remarks>
/// <para><b>Data.</b> Every run is reduced as <c>analyze</c> reduces it: events detected in the signal, the period as the
/// mean interval with its SE (<see cref="EventRunAnalyzer"/>); runs without events are silent. The signal's protophase
/// and field are not compared: a system is compared on its periods and on where it is silent.</para>
/// <para><b>Fit.</b> The firing runs' frequencies 1/T against the frequency of the system's limit cycle at
/// μ_model = c₀ + c₁·μ_lab (<see cref="PlanarProblem"/>, noise-free, Dormand–Prince 5(4)), weighted by their SEs, by
/// Levenberg–Marquardt. A fitted system that is silent where a run fires, or fires fast enough to give three events
/// where a run is silent, contradicts that run outright (no bootstrap).</para>
/// <para><b>Noise model of the replicates.</b> Measurement noise: the standard deviation the event detector found in
/// each run's signal. Intrinsic noise: white noise of intensity σ added to the recorded variable's equation
/// (Euler–Maruyama increment σ√h·N(0, 1) after each RK4 step; Kloeden &amp; Platen 1992, §10.2), one σ for all runs, chosen
/// so that the simulated inter-event intervals scatter as the data's do: σ is scaled by the geometric mean over the
/// firing runs of CV_data/CV_simulated, three times from a start of 1% of the cycle's amplitude per √period.</para>
/// <para><b>Replicates</b> (parametric bootstrap, Efron &amp; Tibshirani 1993, ch. 6): every run re-simulated at its μ
/// with its sampling interval and duration from the system's attractor there (the transient discarded), classical RK4
/// with steps no longer than the sampling interval or 1/500 of the shortest period, measurement noise added to the
/// recorded samples, then analysed with the runs' own options and fitted as the data were. A replicate whose runs fire
/// or stay silent unlike the data's counts as exceeding Q. Verdict, bias, SE and t intervals as in
/// <see cref="ModelComparer"/>; the pilot stage is not used here.</para>
/// <para><b>Onset</b> by simulation and, for a saddle-node on the circle, by the fold of the equilibria
/// (<see cref="PlanarOnset"/>); both are reported and a disagreement is flagged. The replicates' onsets (for the SE)
/// come from the fold when the two agree, else from the simulation.</para>
/// </remarks>
public static class PlanarComparer
{
    /// <summary>Compares <paramref name="model"/> with runs analysed from single-signal recordings.</summary>
    /// <param name="data">The runs and the options they were analysed with.</param>
    /// <param name="model">The parsed system with its recorded variable.</param>
    /// <param name="options">Options; defaults when null. Start and Fixed name the system's parameters.</param>
    /// <param name="initial">Where every simulation starts (the system's two variables); (0, 0) when null.</param>
    /// <returns>The comparison, or the diagnostics that explain why there is none.</returns>
    public static Loaded<ModelComparison> Compare(AnalysedRunSet data, PlanarModel model, CompareOptions? options = null, (double X0, double X1)? initial = null)
    {
        ArgumentNullException.ThrowIfNull(data);
        ArgumentNullException.ThrowIfNull(model);
        options ??= CompareOptions.Default;
        var ic = CultureInfo.InvariantCulture;
        var problems = options.Validate().ToList();
        foreach (var name in options.Start.Keys.Concat(options.Fixed.Keys).Where(n => !model.Parameters.Contains(n)))
        {
            problems.Add(model.Parameters.Count == 0
                ? $"'{name}' is not a parameter: the system has no free parameters."
                : $"'{name}' is not a parameter of the system; its parameters are {string.Join(", ", model.Parameters)}.");
        }

        foreach (var taken in model.Parameters.Where(n => n is "c0" or "c1"))
        {
            problems.Add($"the parameter name '{taken}' is taken by the map μ_model = c0 + c1·μ_lab; rename the system's parameter (e.g. k0)");
        }

        if (problems.Count > 0)
        {
            return new Loaded<ModelComparison>(null, [.. problems.Select(p => new Diagnostic(Severity.Error, "bad-option", p))]);
        }

        var notSignal = data.Runs.Runs.FirstOrDefault(r => r.InputKind != RecordingKind.Signal);
        if (notSignal is not null)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, PlanarRefusals.NotSignal,
                $"run {notSignal.File} is a {notSignal.InputKind.ToString().ToLowerInvariant()} recording; a system with --observe {model.Variables[model.Observed]} is compared with single-signal recordings (a time column and one signal column, e.g. time_ms,Vm_mV) only: phase and positions are compared with a phase model, and event times cannot be re-simulated as the data were recorded"));
        }

        var notes = new List<Diagnostic>();
        var runs = new List<PlanarRun>();
        foreach (var r in data.Runs.Runs)
        {
            var dt = r.Duration / Math.Max(r.Samples - 1, 1);
            if (r.IsTurning && r.Period?.Measured is { } t && t.Value > 0 && double.IsFinite(t.Value) && t.StandardError > 0 && double.IsFinite(t.StandardError))
            {
                runs.Add(new PlanarRun(r, r.Param, true, 1.0 / t.Value, t.StandardError / (t.Value * t.Value), r.Duration, dt));
            }
            else if (!r.IsTurning)
            {
                runs.Add(new PlanarRun(r, r.Param, false, 0.0, double.NaN, r.Duration, dt));
            }
            else
            {
                notes.Add(new Diagnostic(Severity.Warning, "run-left-out", $"run {r.File} fires but has too few intervals for a period with an error; it is left out of the comparison", r.File));
            }
        }

        var pCount = model.Parameters.Count;
        var start = new double[pCount + 2];
        var free = new bool[pCount + 2];
        for (var i = 0; i < pCount; i++)
        {
            var name = model.Parameters[i];
            free[i] = !options.Fixed.ContainsKey(name);
            start[i] = options.Fixed.TryGetValue(name, out var v) ? v : options.Start.TryGetValue(name, out var s) ? s : 1.0;
        }

        start[pCount] = options.FixedOffset ?? options.StartOffset;
        start[pCount + 1] = options.FixedScale ?? options.StartScale;
        free[pCount] = options.FixedOffset is null;
        free[pCount + 1] = options.FixedScale is null;
        var (x0, x1) = initial ?? (0.0, 0.0);
        if (!runs.Any(r => r.Fires))
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.TooFewPoints,
                "no run fires with a measured period: there is nothing to compare the system with"));
        }

        var problem = new PlanarProblem(model, runs, start, free, x0, x1);
        if (problem.Points <= problem.FreeCount)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.TooFewPoints, string.Create(ic,
                $"{problem.Points} firing runs cannot determine {problem.FreeCount} unknowns: add runs or hold parameters fixed (--fix, --c0, --c1)")));
        }

        var lm = new LevenbergMarquardtOptions { MaxIterations = Math.Min(options.MaxIterations, 60), CostTolerance = 1e-9, StepTolerance = 1e-8 };
        var fit = LevenbergMarquardt.Minimize(problem.Evaluate, problem.StartVector(), lm);
        if (fit.Exit == LevenbergMarquardtExit.InvalidStart || !fit.Parameters.All(double.IsFinite))
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.CannotFit,
                "the system cannot be integrated at the starting parameters (a rate is not finite or the state runs away): give starting values with --start and a starting state with --initial"));
        }

        if (!fit.Converged)
        {
            notes.Add(new Diagnostic(Severity.Warning, "fit-not-converged", string.Create(ic,
                $"the fit stopped after {fit.Iterations} iterations without converging: the estimates may not be the best; try other --start values")));
        }

        var full = problem.Expand(fit.Parameters);
        var observedR = fit.Residuals;
        var q = observedR.Sum(x => x * x);
        var outcomes = runs.Select(r => problem.Cycle(full, r.MuLab)).ToArray();
        var contradictions = new List<string>();
        for (var i = 0; i < runs.Count; i++)
        {
            if (runs[i].Fires && !outcomes[i].Fires)
            {
                contradictions.Add(string.Create(ic, $"silent at μ = {Numerics.ErrorDigits.Plain(runs[i].MuLab, 6)}, where {runs[i].Source.File} fires"));
            }
            else if (!runs[i].Fires && outcomes[i].Fires && outcomes[i].Period < runs[i].Duration / 2)
            {
                contradictions.Add(string.Create(ic, $"fires with period {Numerics.ErrorDigits.Plain(outcomes[i].Period, 4)} at μ = {Numerics.ErrorDigits.Plain(runs[i].MuLab, 6)}, where {runs[i].Source.File} stays silent for {Numerics.ErrorDigits.Plain(runs[i].Duration, 4)}"));
            }
        }

        // Onset by simulation and by the fold of the equilibria.
        var simulated = PlanarOnset.BySimulation(problem, full);
        // The fold is sought from a rest state: that of the silent run nearest the onset (the bisection's silent end may
        // be a cycle too slow to count, caught anywhere on it), else the bisection's.
        var nearestSilent = simulated is null ? -1 : Enumerable.Range(0, runs.Count).Where(i => !outcomes[i].Fires && !outcomes[i].Failed)
            .OrderBy(i => Math.Abs(runs[i].MuLab - simulated.Value)).DefaultIfEmpty(-1).First();
        var fold = simulated is null ? null : nearestSilent >= 0
            ? PlanarOnset.FoldNear(problem, full, outcomes[nearestSilent].X0, outcomes[nearestSilent].X1, runs[nearestSilent].MuLab)
            : PlanarOnset.FoldNear(problem, full, simulated.RestX0, simulated.RestX1, simulated.SilentLab);
        var span = runs.Max(r => r.MuLab) - runs.Min(r => r.MuLab);
        var foldAgrees = simulated is not null && fold is not null && Math.Abs(fold.MuLab - simulated.Value) <= Math.Max(4 * simulated.HalfWidth, 1e-3 * span);
        if (simulated is null)
        {
            notes.Add(new Diagnostic(Severity.Warning, "no-onset", "the fitted system does not change from silent to firing within reach of the runs: no onset"));
        }
        else
        {
            notes.Add(new Diagnostic(Severity.Info, "onset-by-simulation", string.Create(ic,
                $"the fitted system's limit cycle appears at μ_lab = {Numerics.ErrorDigits.Plain(simulated.Value, 8)} (bisection between silent and firing, resolution ±{Numerics.ErrorDigits.Plain(simulated.HalfWidth, 2)}; a cycle slower than {Numerics.ErrorDigits.Plain(problem.TimeCap / 4, 3)} counts as silent)")));
            notes.Add(fold is null
                ? new Diagnostic(Severity.Warning, "onset-not-fold",
                    "no fold of the equilibria (f = g = 0, det J = 0) was found near the onset: the cycle does not begin at a saddle-node of equilibria (e.g. a Hopf bifurcation, class II); the onset is the simulation's")
                : foldAgrees
                    ? new Diagnostic(Severity.Info, "onset-fold", string.Create(ic,
                        $"the fold of the equilibria is at μ_lab = {Numerics.ErrorDigits.Plain(fold.MuLab, 8)} (μ_model = {Numerics.ErrorDigits.Plain(fold.MuModel, 8)}, state {model.Variables[0]} = {Numerics.ErrorDigits.Plain(fold.X0, 6)}, {model.Variables[1]} = {Numerics.ErrorDigits.Plain(fold.X1, 6)}): it agrees with the simulation, a saddle-node on the invariant circle"))
                    : new Diagnostic(Severity.Warning, "onset-not-fold", string.Create(ic,
                        $"the fold of the equilibria nearest the onset is at μ_lab = {Numerics.ErrorDigits.Plain(fold.MuLab, 8)}, away from the simulation's {Numerics.ErrorDigits.Plain(simulated.Value, 8)}: the cycle does not begin at that saddle-node (e.g. a Hopf bifurcation or bistability); the onset is the simulation's")));
        }

        var seed = Fingerprint(options.Seed, runs);
        var replicates = Array.Empty<PlanarReplicate?>();
        var noise = (Dynamic: 0.0, Measurement: runs.Select(r => r.Source.Events?.NoiseSd ?? 0.0).ToArray());
        if (contradictions.Count == 0)
        {
            var sampler = new PlanarSampler(problem, data.Options.Run, options, full, outcomes);
            noise = (sampler.CalibrateIntrinsicNoise(GaussianSource.DeriveSeed(seed, 7)), noise.Measurement);
            notes.Add(new Diagnostic(Severity.Info, "system-noise", string.Create(ic,
                $"replicates carry intrinsic noise of intensity {Numerics.ErrorDigits.Plain(noise.Dynamic, 3)} on {model.Variables[model.Observed]}' (matched to the scatter of the inter-event intervals) and each run's measurement noise ({string.Join(", ", noise.Measurement.Select(s => Numerics.ErrorDigits.Plain(s, 3)))})")));
            replicates = sampler.Draw(noise.Dynamic, options.Replicates, seed, foldAgrees ? fold : null);
        }

        notes.Add(new Diagnostic(Severity.Info, "system-periods-only",
            "the system is compared on the runs' periods and on where they are silent; the signal's protophase and field are not compared"));

        var ok = replicates.Where(x => x is not null).Select(x => x!).ToList();
        var failed = replicates.Length - ok.Count;
        var k = problem.FreeCount;
        var tq = ok.Count >= 2 ? StudentT.InvCDF(0.0, 1.0, ok.Count - 1, 0.975) : double.NaN;
        var inflate = Math.Sqrt(1.0 + (options.CorrectBias ? 1.0 / Math.Max(ok.Count, 1) : 0.0));
        var value = (double[])fit.Parameters.Clone();
        var se = new double[k];
        var bias = new double[k];
        for (var u = 0; u < k; u++)
        {
            var draws = ok.Select(x => x.Free[u]).ToList();
            se[u] = ok.Count >= 2 ? inflate * SampleStatistics.StandardDeviation(draws) : double.NaN;
            if (options.CorrectBias && ok.Count >= 2)
            {
                bias[u] = draws.Average() - fit.Parameters[u];
                value[u] -= bias[u];
            }
        }

        var fullValue = problem.Expand(value);
        FittedParameter Parameter(string name, int f)
        {
            var fi = problem.FreeIndexOf(f);
            return fi < 0
                ? new FittedParameter(name, fullValue[f], 0.0, true)
                : new FittedParameter(name, fullValue[f], se[fi], false) { Quantile = tq, Bias = bias[fi] };
        }

        var parameters = Enumerable.Range(0, pCount).Select(i => Parameter(model.Parameters[i], i)).ToList();
        var onsetHat = simulated?.Value ?? double.NaN;
        var onset = new Estimate(onsetHat, double.NaN);
        var onsetCi = new Interval(double.NaN, double.NaN);
        var onsets = ok.Select(x => x.Onset).Where(double.IsFinite).ToList();
        if (double.IsFinite(onsetHat) && ok.Count >= 2 && onsets.Count == ok.Count)
        {
            var centre = foldAgrees ? fold!.MuLab : onsetHat;
            var v = options.CorrectBias ? onsetHat - (onsets.Average() - centre) : onsetHat;
            var s = inflate * SampleStatistics.StandardDeviation(onsets);
            onset = new Estimate(v, s);
            onsetCi = new Interval(v - (tq * s), v + (tq * s));
        }
        else if (double.IsFinite(onsetHat) && ok.Count >= 2)
        {
            notes.Add(new Diagnostic(Severity.Warning, "onset-unbounded", string.Create(ic,
                $"{ok.Count - onsets.Count} of {ok.Count} replicates put no onset within reach: the onset has no interval")));
        }

        var exceed = ok.Count(x => x.Statistic >= q) + failed;
        var p = replicates.Length > 0 ? (1.0 + exceed) / (replicates.Length + 1.0) : double.NaN;
        var consistent = contradictions.Count == 0 && p > options.Significance;
        if (failed > 0)
        {
            notes.Add(new Diagnostic(Severity.Warning, "replicates-failed", string.Create(ic,
                $"{failed} of {replicates.Length} replicates simulated from the fitted system fired or stayed silent unlike the runs, or could not be fitted; they count against the system in the test and are left out of the standard errors")));
        }

        var runMisfits = new List<RunMisfit>();
        for (var i = 0; i < problem.Firing.Count; i++)
        {
            var run = problem.Firing[i];
            var expected = ok.Count > 0 ? ok.Average(x => x.Residuals[i] * x.Residuals[i]) : 1.0;
            runMisfits.Add(new RunMisfit(run.Source.File, run.MuLab, 1, observedR[i] * observedR[i], expected, double.NaN, observedR[i] / Math.Sqrt(expected)));
        }

        var worst = runMisfits.OrderByDescending(m => m.Ratio).Take(options.WorstCount).ToList();
        if (contradictions.Count > 0)
        {
            notes.Add(new Diagnostic(Severity.Warning, "model-stops", "the fitted system contradicts runs outright: it is " + string.Join("; ", contradictions)));
        }
        else if (!consistent)
        {
            notes.Add(new Diagnostic(Severity.Warning, "model-rejected", string.Create(ic,
                $"the system does not fit within the data's own scatter: Q = {Numerics.ErrorDigits.Plain(q, 4)} is exceeded by {exceed} of {replicates.Length} run sets simulated from the fitted system (p = {Numerics.ErrorDigits.Plain(p, 2)}); worst run {worst[0].File} (μ = {Numerics.ErrorDigits.Plain(worst[0].Param, 6)})")));
        }

        var comparison = new ModelComparison(
            model.Text, parameters, Parameter("c0", pCount), Parameter("c1", pCount + 1), onset, onsetCi, q,
            ok.Count > 0 ? ok.Average(x => x.Statistic) : double.NaN, p, consistent, problem.Points, runMisfits, [], worst, [], notes)
        {
            IsSystem = true,
            ReplicateStatistics = [.. ok.Select(x => x.Statistic)],
            FailedReplicates = failed,
            Iterations = fit.Iterations,
        };
        return new Loaded<ModelComparison>(comparison, comparison.Diagnostics);
    }

    /// <summary><paramref name="seed"/> mixed with the runs' μ and frequencies (FNV-1a 64 over their bits, as <see cref="ComparisonProblem.Fingerprint"/>).</summary>
    private static int Fingerprint(int seed, List<PlanarRun> runs)
    {
        var h = 14695981039346656037UL;
        foreach (var x in runs.SelectMany(r => new[] { r.MuLab, r.Frequency, r.FrequencySe }))
        {
            var bits = (ulong)BitConverter.DoubleToInt64Bits(x);
            for (var k = 0; k < 8; k++)
            {
                h = (h ^ ((bits >> (8 * k)) & 0xFF)) * 1099511628211UL;
            }
        }

        return GaussianSource.DeriveSeed(GaussianSource.DeriveSeed(seed, (int)(h >> 32)), (int)h);
    }
}

/// <summary>One replicate's fit: Q*, free parameters, residuals of the firing runs and onset.</summary>
internal sealed record PlanarReplicate(double Statistic, double[] Free, double[] Residuals, double Onset);

/// <summary>Simulated recordings of a fitted system, their analysis and refit (see <see cref="PlanarComparer"/>).</summary>
internal sealed class PlanarSampler(PlanarProblem problem, RunOptions analysis, CompareOptions options, double[] full, CycleOutcome[] attractors)
{
    private readonly double shortestPeriod = attractors.Where(o => o.Fires).Select(o => o.Period).DefaultIfEmpty(double.PositiveInfinity).Min();

    /// <summary>One σ for all runs, matching the simulated inter-event CV to the data's (geometric mean ratio, three rounds).</summary>
    public double CalibrateIntrinsicNoise(int seed)
    {
        var firing = Enumerable.Range(0, problem.Runs.Count).Where(i => problem.Runs[i].Fires && attractors[i].Fires).ToList();
        if (firing.Count == 0)
        {
            return 0.0;
        }

        double Cv(RunResult r) => r.Period?.Measured is { } t && r.Period.Revolutions >= 2 ? t.StandardError * Math.Sqrt(r.Period.Revolutions) / t.Value : double.NaN;
        var target = firing.Select(i => Cv(problem.Runs[i].Source)).ToArray();
        var sigma = firing.Select(i => 0.01 * (attractors[i].High - attractors[i].Low) / Math.Sqrt(attractors[i].Period)).Average();
        for (var round = 0; round < 3; round++)
        {
            var logs = new double[firing.Count];
            Parallel.For(0, firing.Count, new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, options.Parallelism) }, j =>
            {
                var i = firing[j];
                var run = Analyse(i, sigma, GaussianSource.DeriveSeed(GaussianSource.DeriveSeed(seed, round), i));
                var cv = run is null ? double.NaN : Cv(run);
                logs[j] = cv > 0 && target[j] > 0 ? Math.Log(target[j] / cv) : double.NaN;
            });
            var usable = logs.Where(double.IsFinite).ToList();
            if (usable.Count == 0)
            {
                break;
            }

            sigma *= Math.Clamp(Math.Exp(usable.Average()), 0.1, 10.0);
        }

        return sigma;
    }

    /// <summary><paramref name="count"/> replicates; null where one failed or fired or stayed silent unlike the data.</summary>
    public PlanarReplicate?[] Draw(double sigma, int count, int seed, Fold? fold)
    {
        var results = new PlanarReplicate?[count];
        Parallel.For(0, count, new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, options.Parallelism) }, b => results[b] = One(sigma, GaussianSource.DeriveSeed(seed, b), fold));
        return results;
    }

    private PlanarReplicate? One(double sigma, int seed, Fold? fold)
    {
        var runs = new List<PlanarRun>(problem.Runs.Count);
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var data = problem.Runs[i];
            var r = Analyse(i, sigma, GaussianSource.DeriveSeed(seed, i));
            if (r is null)
            {
                return null;
            }

            var fires = r.IsTurning && r.Period?.Measured is { } t && t.Value > 0 && t.StandardError > 0 && double.IsFinite(t.StandardError);
            if (fires != data.Fires)
            {
                return null;
            }

            if (fires)
            {
                var m = r.Period!.Measured;
                runs.Add(data with { Source = r, Frequency = 1.0 / m.Value, FrequencySe = m.StandardError / (m.Value * m.Value) });
            }
            else
            {
                runs.Add(data with { Source = r });
            }
        }

        var start = (double[])full.Clone();
        var freeMask = Enumerable.Range(0, full.Length).Select(f => problem.FreeIndexOf(f) >= 0).ToArray();
        var replica = new PlanarProblem(problem.Model, runs, start, freeMask, problem.Start0, problem.Start1);
        var lm = new LevenbergMarquardtOptions { MaxIterations = Math.Min(options.MaxIterations, 60), CostTolerance = 1e-9, StepTolerance = 1e-8 };
        var fit = LevenbergMarquardt.Minimize(replica.Evaluate, replica.StartVector(), lm);
        if (fit.Exit == LevenbergMarquardtExit.InvalidStart || !fit.Parameters.All(double.IsFinite))
        {
            return null;
        }

        var fitted = replica.Expand(fit.Parameters);
        double onset;
        if (fold is not null)
        {
            onset = PlanarOnset.FoldNear(replica, fitted, fold.X0, fold.X1, (fold.MuModel - fitted[problem.ParameterCount]) / fitted[problem.ParameterCount + 1])?.MuLab ?? double.NaN;
        }
        else
        {
            onset = PlanarOnset.BySimulation(replica, fitted)?.Value ?? double.NaN;
        }

        return new PlanarReplicate(fit.Residuals.Sum(x => x * x), fit.Parameters, fit.Residuals, onset);
    }

    /// <summary>Run <paramref name="i"/> re-simulated from the fitted system with noise, analysed as the data were; null when it could not be.</summary>
    private RunResult? Analyse(int i, double sigma, int seed)
    {
        var data = problem.Runs[i];
        var source = data.Source;
        var samples = Math.Max(source.Samples, 2);
        var dt = data.SamplingInterval;
        var substeps = (int)Math.Clamp(Math.Ceiling(dt / (shortestPeriod / 500.0)), 1, 1000);
        var h = dt / substeps;
        var pars = full[..problem.ParameterCount];
        var field = problem.Model.CreateField(pars, problem.MuModel(full, data.MuLab));
        var observed = problem.Model.Observed;
        var intrinsic = GaussianSource.Create(seed, stream: 1);
        var measurement = GaussianSource.Create(seed, stream: 2);
        var sd = source.Events?.NoiseSd ?? 0.0;
        var x0 = attractors[i].X0;
        var x1 = attractors[i].X1;
        var kick = sigma * Math.Sqrt(h);
        var time = new double[samples];
        var values = new double[samples];
        for (var k = 0; k < samples; k++)
        {
            time[k] = k * dt;
            values[k] = (observed == 0 ? x0 : x1) + (sd > 0 ? sd * measurement.Next() : 0.0);
            for (var s = 0; s < substeps; s++)
            {
                OdeStepper.RungeKutta4(field, h, ref x0, ref x1);
                if (kick > 0)
                {
                    if (observed == 0)
                    {
                        x0 += kick * intrinsic.Next();
                    }
                    else
                    {
                        x1 += kick * intrinsic.Next();
                    }
                }
            }

            if (!double.IsFinite(x0) || !double.IsFinite(x1))
            {
                return null;
            }
        }

        var column = source.Events?.Column ?? "signal";
        var recording = new SignalRecording(source.File, time, values, [0]) { SignalColumnName = column };
        return RecordingAnalyzer.Analyze(recording, data.MuLab, source.File, source.Label, analysis, []).Value;
    }
}
