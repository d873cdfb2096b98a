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
/// θ̇(θ) and the measured periods of all runs, and tests whether it holds.
/// </summary>
/// <remarks>
/// <para><b>Data.</b> Each field bin gives r = (⟨f⟩_bin − θ̇_bin)/SE_bin, where ⟨f⟩_bin is the model's mean over the
/// bin's phase interval (3-point Gauss–Legendre), matching the field's phase-weighted bin means. Each measured period
/// enters as a frequency, r = (1/T_model − 1/T)/(SE_T/T²), with T_model = ∮dθ/f by the trapezoid rule on 1024 points
/// (exponentially accurate for smooth periodic integrands; Trefethen &amp; Weideman 2014). The frequency goes to 0
/// continuously at the model's onset, so a trial step past it stays finite. The runs' orientation is honoured: a run
/// whose phase was negated to make it increase is compared with −f(−θ).</para>
/// <para><b>Fit.</b> Levenberg–Marquardt (Levenberg 1944; Marquardt 1963) with Marquardt's diagonal scaling, exact
/// Jacobian by forward-mode differentiation of the expression.</para>
/// <para><b>Errors.</b> Bins of one run are correlated (the spline couples neighbours; their SEs come from a bootstrap
/// over revolutions, bin by bin). The lag correlations ρ_k of the standardised residuals are pooled over runs and
/// truncated where they fall below noise (from the residuals of the free per-run fit). Parameter covariance: sandwich A⁻¹BA⁻¹ with A = JᵀJ and B = Jᵀ Σ J, Σ
/// block-circulant per run with Bartlett-tapered ρ_k (Newey &amp; West 1987), scaled by Q/(N − k).</para>
/// <para><b>Verdict.</b> Lack-of-fit F test (Fisher 1922; Draper &amp; Smith 1998, §2.1): each run's field is also
/// fitted alone by a weighted Fourier series of K harmonics, which absorbs any smooth misfit. Per run, the error scale is
/// κ = Q_free/(m − (2K+1)·L) and F = [Σ(Q_model − Q_free)/(κ·L)]/d₁ on d₁ = Σ(2K+1) − k and d₂ = Σ(m − (2K+1)L)
/// degrees of freedom, with L = 1 + 2Σρ_k the long-run variance factor of the correlated bin errors (ρ_k from the
/// free-fit residuals). Not yet calibrated: see docs/model-expressions.md, "Status".</para>
/// <para><b>Onset.</b> The μ_lab where min_θ f reaches 0, by bracketing and regula falsi (Illinois variant; Dowell
/// &amp; Jarratt 1971); the 95% interval is the 2.5–97.5% range of onsets over parameter draws from N(q̂, Cov)
/// (Monte-Carlo propagation of the fit's asymptotic distribution). Cost: O(iterations × points × program length × k).</para>
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

        var problem = Problem.Build(runs, model, options);
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

        var start = problem.StartVector();
        var fit = LevenbergMarquardt(problem, start, options.MaxIterations);
        if (fit is null)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.CannotFit,
                "the model gives no finite value at the starting parameters (e.g. log or sqrt of a negative number, or a division by zero): give starting values with --start"));
        }

        if (options.CorrectSmoothingBias)
        {
            // Pass the fitted model through the same reconstruction and refit (twice: the bias depends weakly on p).
            for (var round = 0; round < 2 && fit is not null; round++)
            {
                problem.SetBias(SmoothingBias(problem, problem.Expand(fit.Parameters)));
                fit = LevenbergMarquardt(problem, fit.Parameters, options.MaxIterations);
            }

            if (fit is null)
            {
                return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.CannotFit,
                    "the model gives no finite value after correcting the fields for smoothing bias: give starting values with --start"));
            }
        }

        var comparison = Finish(problem, model, options, fit, notes);
        return new Loaded<ModelComparison>(comparison, comparison.Diagnostics);
    }

    private static ModelComparison Finish(Problem problem, ModelExpression model, CompareOptions options, FitState fit, List<Diagnostic> notes)
    {
        var ic = CultureInfo.InvariantCulture;
        var k = problem.FreeCount;
        var n = problem.Points;
        var r = fit.Residuals;
        var q = r.Sum(x => x * x);
        if (!fit.Converged)
        {
            notes.Add(new Diagnostic(Severity.Warning, "fit-not-converged", string.Create(ic,
                $"the fit stopped after {fit.Iterations} iterations without converging: the estimates may not be the best; try other --start values")));
        }

        // Lack-of-fit test against a flexible per-run reference (see remarks): scale and correlation of the bin
        // errors come from the residuals about a Fourier series fitted to each run alone.
        var flex = FlexibleFits(problem);
        var rho = BinCorrelation(problem, flex.Residuals);
        var longRun = 1.0 + (2.0 * rho.Sum());
        var numerator = 0.0;
        var d1 = -(double)k;
        var d2 = 0.0;
        var kappas = new double[problem.Runs.Count];
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var run = problem.Runs[i];
            var basis = flex.BasisSize[i];
            var residualDof = run.FieldPoints - (basis * longRun);
            kappas[i] = flex.Statistic[i] / Math.Max(residualDof, 1.0);
            var modelField = 0.0;
            foreach (var point in run.FieldIndexByBin)
            {
                modelField += point >= 0 ? r[point] * r[point] : 0.0;
            }

            numerator += (modelField - flex.Statistic[i]) / (kappas[i] * longRun);
            d1 += basis;
            d2 += residualDof;
        }

        d1 = Math.Max(d1, 1.0);
        d2 = Math.Max(d2, 1.0);
        var fStat = numerator / d1;
        var p = 1.0 - FisherSnedecor.CDF(d1, d2, Math.Max(fStat, 0.0));
        var consistent = p >= options.Significance;
        var dof = d1;
        var scale = d2;
        var expected = n - k;

        // Covariance: sandwich with block-circulant, Bartlett-tapered correlation (Newey & West 1987).
        var jac = fit.Jacobian;
        var a = new double[k, k];
        for (var i = 0; i < n; i++)
        {
            for (var u = 0; u < k; u++)
            {
                for (var v = 0; v < k; v++)
                {
                    a[u, v] += jac[i, u] * jac[i, v];
                }
            }
        }

        var cov = new double[k, k];
        var chol = SmallDense.Cholesky(a);
        var covOk = chol is not null;
        if (chol is not null)
        {
            var ainv = SmallDense.Inverse(chol);
            var b = Meat(problem, jac, rho);
            var kappa = q / Math.Max(expected, 1);
            for (var u = 0; u < k; u++)
            {
                for (var v = 0; v < k; v++)
                {
                    var s = 0.0;
                    for (var x = 0; x < k; x++)
                    {
                        for (var y = 0; y < k; y++)
                        {
                            s += ainv[u, x] * b[x, y] * ainv[y, v];
                        }
                    }

                    cov[u, v] = kappa * s;
                }
            }
        }
        else
        {
            notes.Add(new Diagnostic(Severity.Warning, "unidentifiable", "the data cannot tell some parameters apart (the fit's curvature matrix is singular): hold some fixed or remove them; standard errors are not available"));
        }

        var full = problem.Expand(fit.Parameters);
        var se = new double[problem.FullCount];
        for (var f = 0; f < problem.FullCount; f++)
        {
            var free = problem.FreeIndexOf(f);
            se[f] = free < 0 ? 0.0 : covOk ? Math.Sqrt(Math.Max(cov[free, free], 0.0)) : double.NaN;
        }

        var pCount = model.Parameters.Count;
        var parameters = Enumerable.Range(0, pCount)
            .Select(i => new FittedParameter(model.Parameters[i], full[i], se[i], problem.FreeIndexOf(i) < 0))
            .ToList();
        var offset = new FittedParameter("c0", full[pCount], se[pCount], problem.FreeIndexOf(pCount) < 0);
        var scaleMap = new FittedParameter("c1", full[pCount + 1], se[pCount + 1], problem.FreeIndexOf(pCount + 1) < 0);

        // Onset and its interval.
        var onset = new Estimate(double.NaN, double.NaN);
        var ci = new Interval(double.NaN, double.NaN);
        if (model.UsesMu)
        {
            var finder = new OnsetFinder(problem);
            var best = finder.Find(full);
            if (double.IsFinite(best) && covOk)
            {
                (onset, ci, var missing) = OnsetDraws(problem, finder, fit.Parameters, cov, best, options);
                if (missing > 0.025)
                {
                    notes.Add(new Diagnostic(Severity.Warning, "onset-unbounded", string.Create(ic,
                        $"{missing:P0} of parameter draws put no onset within reach: the onset interval is open")));
                }
            }
            else if (!double.IsFinite(best))
            {
                notes.Add(new Diagnostic(Severity.Warning, "no-onset", "the fitted model's minimum speed does not reach zero for any μ in reach: no onset"));
            }
            else
            {
                onset = new Estimate(best, double.NaN);
            }
        }

        var (runMisfits, regions) = Summaries(problem, r, kappas, options.Regions, (double)expected / n);
        var worstRuns = runMisfits.OrderByDescending(m => m.Ratio).Take(options.WorstCount).ToList();
        var worstRegions = regions.Where(g => g.Points > 0).OrderByDescending(g => g.Ratio).Take(options.WorstCount).ToList();
        if (!consistent)
        {
            notes.Add(new Diagnostic(Severity.Warning, "model-rejected", string.Create(ic,
                $"the model does not fit within the data's uncertainty (lack-of-fit F = {fStat:G4} on {d1:F0} and {d2:F0} degrees of freedom, p = {p:G2}); worst run {worstRuns[0].File} (μ = {worstRuns[0].Param:G6}), worst phase region [{worstRegions[0].From:F2}, {worstRegions[0].To:F2})")));
        }

        return new ModelComparison(
            model.Text, parameters, offset, scaleMap, onset, ci, fStat, 1.0, p, consistent, n,
            runMisfits, regions, worstRuns, worstRegions, notes)
        {
            ReferenceDegreesOfFreedom = dof,
            ReferenceScale = scale,
            BinCorrelation = rho,
            Iterations = fit.Iterations,
        };
    }

    /// <summary>
    /// Smoothing bias of each field point: the model at the given parameters is simulated without noise at each run's
    /// μ, sampling interval and length, reconstructed by the same pipeline with the run's own λ and bins, and compared
    /// with the exact bin means. The spline is linear in the data for fixed λ, so smooth(truth + noise) − truth =
    /// [smooth(truth) − truth] + smooth(noise): subtracting the first term leaves the field unbiased.
    /// </summary>
    private static double[] SmoothingBias(Problem problem, double[] full)
    {
        var bias = new double[problem.FieldPointCount];
        var pCount = problem.ParameterCount;
        var pars = full[..pCount];
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var run = problem.Runs[i];
            var source = problem.Source(i);
            if (source.Smoothing is not { } smooth || !(smooth.Lambda > 0) || source.Samples < 16 || !(source.Duration > 0))
            {
                continue;
            }

            var s = run.Sign;
            var muModel = full[pCount] + (full[pCount + 1] * run.MuLab);
            var expression = problem.Model;
            var ev = expression.CreateEvaluator();
            var oriented = PhaseModel.Create("fitted", expression.Text, (theta, mu) => s * ev.Evaluate(s * theta, mu, pars, []));
            var dt = source.Duration / (source.Samples - 1);
            var turns = Math.Max(2, (int)Math.Floor(source.Turns));
            SimulatedRun sim;
            try
            {
                sim = Simulator.Run(oriented, new SimulationOptions
                {
                    Mu = muModel,
                    Revolutions = turns,
                    SamplingInterval = dt,
                    InitialPhase = 0.0,
                    MaxDuration = Math.Min(3.0 * source.Duration, dt * (SimulationOptions.MaxSamples / 4)),
                    WrapPhase = false,
                });
            }
            catch (ArgumentException)
            {
                continue; // the fitted model cannot be simulated here (e.g. too stiff): leave the run uncorrected
            }

            if (!sim.ReachedRevolutions)
            {
                continue;
            }

            var recording = new PhaseRecording(run.File, sim.Time, sim.Phase, [0]);
            var rebuilt = RunAnalyzer.Analyze(Trajectory.FromRecording(recording), run.MuLab, run.File, null, new RunOptions
            {
                Smoothing = new Smoothing.SmoothingOptions { Lambda = smooth.Lambda },
                Field = new Field.FieldOptions { Bins = run.Bins, BootstrapReplicates = 0 },
            });
            if (rebuilt.Field is not { } f || f.Centres.Length != run.Bins)
            {
                continue;
            }

            for (var j = 0; j < run.Bins; j++)
            {
                var point = run.FieldIndexByBin[j];
                if (point >= 0 && double.IsFinite(f.Velocity[j]))
                {
                    bias[point] = f.Velocity[j] - problem.ExactBinMean(point, full);
                }
            }
        }

        return bias;
    }

    private static (Estimate Onset, Interval Ci, double Missing) OnsetDraws(
        Problem problem, OnsetFinder finder, double[] free, double[,] cov, double best, CompareOptions options)
    {
        var k = free.Length;
        var l = SmallDense.Cholesky(cov);
        if (l is null)
        {
            // A covariance that is only semi-definite: jitter its diagonal by a negligible relative amount.
            var jittered = (double[,])cov.Clone();
            for (var i = 0; i < k; i++)
            {
                jittered[i, i] += 1e-12 * Math.Max(cov[i, i], 1e-300);
            }

            l = SmallDense.Cholesky(jittered);
            if (l is null)
            {
                return (new Estimate(best, double.NaN), new Interval(double.NaN, double.NaN), 1.0);
            }
        }

        var gauss = GaussianSource.Create(options.Seed, stream: 7);
        var onsets = new List<double>(options.OnsetDraws);
        var z = new double[k];
        var draw = new double[k];
        for (var d = 0; d < options.OnsetDraws; d++)
        {
            for (var i = 0; i < k; i++)
            {
                z[i] = gauss.Next();
            }

            for (var i = 0; i < k; i++)
            {
                var s = free[i];
                for (var j = 0; j <= i; j++)
                {
                    s += l[i, j] * z[j];
                }

                draw[i] = s;
            }

            var o = finder.Find(problem.Expand(draw));
            if (double.IsFinite(o))
            {
                onsets.Add(o);
            }
        }

        var missing = 1.0 - ((double)onsets.Count / options.OnsetDraws);
        if (onsets.Count < 0.9 * options.OnsetDraws)
        {
            return (new Estimate(best, double.NaN), new Interval(double.NaN, double.NaN), missing);
        }

        onsets.Sort();
        var mean = onsets.Average();
        var sd = Math.Sqrt(onsets.Sum(x => (x - mean) * (x - mean)) / (onsets.Count - 1));
        return (new Estimate(best, sd), new Interval(Quantile(onsets, 0.025), Quantile(onsets, 0.975)), missing);
    }

    private static double Quantile(List<double> sorted, double p)
    {
        var h = (sorted.Count - 1) * p;
        var lo = (int)Math.Floor(h);
        var hi = Math.Min(lo + 1, sorted.Count - 1);
        return sorted[lo] + ((h - lo) * (sorted[hi] - sorted[lo]));
    }

    private sealed record Flexible(double[] Residuals, double[] Statistic, int[] BasisSize);

    /// <summary>
    /// Each run's field fitted alone by a weighted Fourier series 1, cos hθ, sin hθ (h ≤ K, K = clamp(m/8, 2, 8)):
    /// a model-free description that absorbs any smooth misfit and leaves the noise.
    /// </summary>
    private static Flexible FlexibleFits(Problem problem)
    {
        var residuals = new double[problem.Points];
        var stats = new double[problem.Runs.Count];
        var sizes = new int[problem.Runs.Count];
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var run = problem.Runs[i];
            var harmonics = Math.Clamp(run.Bins / 8, 2, 8);
            while (harmonics > 1 && run.FieldPoints < 3 * ((2 * harmonics) + 1))
            {
                harmonics--;
            }

            var size = (2 * harmonics) + 1;
            sizes[i] = size;
            var points = run.FieldIndexByBin.Where(x => x >= 0).ToArray();
            var a = new double[size, size];
            var b = new double[size];
            var row = new double[size];
            foreach (var point in points)
            {
                var (theta, value, se) = problem.FieldDatum(point);
                Basis(theta, row);
                for (var u = 0; u < size; u++)
                {
                    b[u] += row[u] * value / (se * se);
                    for (var v = 0; v < size; v++)
                    {
                        a[u, v] += row[u] * row[v] / (se * se);
                    }
                }
            }

            var l = SmallDense.Cholesky(a);
            if (l is null)
            {
                continue;
            }

            var beta = SmallDense.Solve(l, b);
            foreach (var point in points)
            {
                var (theta, value, se) = problem.FieldDatum(point);
                Basis(theta, row);
                var fit = 0.0;
                for (var u = 0; u < size; u++)
                {
                    fit += beta[u] * row[u];
                }

                residuals[point] = (fit - value) / se;
                stats[i] += residuals[point] * residuals[point];
            }
        }

        return new Flexible(residuals, stats, sizes);

        static void Basis(double theta, double[] row)
        {
            row[0] = 1.0;
            for (var h = 1; 2 * h < row.Length; h++)
            {
                row[(2 * h) - 1] = Math.Cos(h * theta);
                row[2 * h] = Math.Sin(h * theta);
            }
        }
    }

    /// <summary>Pooled lag correlations ρ_1…ρ_L of the standardised field residuals, circular within each run.</summary>
    private static double[] BinCorrelation(Problem problem, double[] r)
    {
        var maxLag = problem.Runs.Min(run => run.Bins) / 4;
        var zeroSum = 0.0;
        var zeroCount = 0;
        foreach (var run in problem.Runs)
        {
            foreach (var i in run.FieldIndexByBin)
            {
                if (i >= 0)
                {
                    zeroSum += r[i] * r[i];
                    zeroCount++;
                }
            }
        }

        var c0 = zeroSum / Math.Max(zeroCount, 1);
        var rho = new List<double>();
        for (var lag = 1; lag <= maxLag; lag++)
        {
            var sum = 0.0;
            var count = 0;
            foreach (var run in problem.Runs)
            {
                var m = run.Bins;
                for (var j = 0; j < m; j++)
                {
                    var i1 = run.FieldIndexByBin[j];
                    var i2 = run.FieldIndexByBin[(j + lag) % m];
                    if (i1 >= 0 && i2 >= 0)
                    {
                        sum += r[i1] * r[i2];
                        count++;
                    }
                }
            }

            var value = count > 0 && c0 > 0 ? sum / count / c0 : 0.0;

            // Stop where the correlation is no longer distinguishable from zero (its SD is about 1/√count).
            if (!(value > 2.0 / Math.Sqrt(Math.Max(count, 1))))
            {
                break;
            }

            rho.Add(Math.Min(value, 1.0));
        }

        return [.. rho];
    }

    private static double[,] Meat(Problem problem, double[,] jac, double[] rho)
    {
        var k = jac.GetLength(1);
        var b = new double[k, k];
        var taper = rho.Select((x, i) => x * (1.0 - ((i + 1.0) / (rho.Length + 1.0)))).ToArray();
        foreach (var run in problem.Runs)
        {
            var m = run.Bins;
            for (var j = 0; j < m; j++)
            {
                var i1 = run.FieldIndexByBin[j];
                if (i1 < 0)
                {
                    continue;
                }

                for (var lag = -taper.Length; lag <= taper.Length; lag++)
                {
                    var i2 = run.FieldIndexByBin[(((j + lag) % m) + m) % m];
                    if (i2 < 0 || (lag != 0 && Math.Abs(lag) * 2 >= m))
                    {
                        continue;
                    }

                    var w = lag == 0 ? 1.0 : taper[Math.Abs(lag) - 1];
                    for (var u = 0; u < k; u++)
                    {
                        for (var v = 0; v < k; v++)
                        {
                            b[u, v] += w * jac[i1, u] * jac[i2, v];
                        }
                    }
                }
            }

            if (run.PeriodIndex >= 0)
            {
                for (var u = 0; u < k; u++)
                {
                    for (var v = 0; v < k; v++)
                    {
                        b[u, v] += jac[run.PeriodIndex, u] * jac[run.PeriodIndex, v];
                    }
                }
            }
        }

        return b;
    }

    private static (List<RunMisfit> Runs, List<RegionMisfit> Regions) Summaries(Problem problem, double[] raw, double[] kappas, int regionCount, double perPoint)
    {
        // Residuals rescaled by each run's error scale κ, so that a correct model gives mean square about 1.
        var r = (double[])raw.Clone();
        for (var ri = 0; ri < problem.Runs.Count; ri++)
        {
            var c = Math.Sqrt(Math.Max(kappas[ri], 1e-300));
            foreach (var point in problem.Runs[ri].FieldIndexByBin)
            {
                if (point >= 0)
                {
                    r[point] /= c;
                }
            }
        }

        var runs = new List<RunMisfit>();
        var gStat = new double[regionCount];
        var gSum = new double[regionCount];
        var gCount = new int[regionCount];
        var width = 2.0 * Math.PI / regionCount;
        foreach (var run in problem.Runs)
        {
            var stat = 0.0;
            var sum = 0.0;
            var count = 0;
            for (var j = 0; j < run.Bins; j++)
            {
                var i = run.FieldIndexByBin[j];
                if (i < 0)
                {
                    continue;
                }

                stat += r[i] * r[i];
                sum += r[i];
                count++;
                var g = Math.Min((int)(problem.FieldCentre(i) / width), regionCount - 1);
                gStat[g] += r[i] * r[i];
                gSum[g] += r[i];
                gCount[g]++;
            }

            var periodResidual = double.NaN;
            if (run.PeriodIndex >= 0)
            {
                periodResidual = r[run.PeriodIndex];
                stat += periodResidual * periodResidual;
                count++;
            }

            runs.Add(new RunMisfit(run.File, run.MuLab, count, stat, count * perPoint, count > 0 ? sum / Math.Max(count - (run.PeriodIndex >= 0 ? 1 : 0), 1) : double.NaN, periodResidual));
        }

        var regions = Enumerable.Range(0, regionCount)
            .Select(g => new RegionMisfit(g * width, (g + 1) * width, gCount[g], gStat[g], gCount[g] * perPoint, gCount[g] > 0 ? gSum[g] / gCount[g] : double.NaN))
            .ToList();
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
        private double[] rawValues = [];
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

        public static Problem Build(IReadOnlyList<RunResult> runs, ModelExpression model, CompareOptions options)
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
            var problem = new Problem(model, start, free);
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
            problem.rawValues = [.. problem.bins.Select(b => b.Value)];

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

        public (double Theta, double Value, double Se) FieldDatum(int point) => (bins[point].Centre, bins[point].Value, bins[point].Se);

        public RunResult Source(int run) => sources[run];

        /// <summary>Subtracts a per-point bias from the field data (replacing any earlier correction).</summary>
        public void SetBias(double[] bias)
        {
            for (var i = 0; i < bins.Count; i++)
            {
                var b = bins[i];
                bins[i] = b with { Value = rawValues[i] - bias[i] };
            }
        }

        /// <summary>The model's exact phase mean over the bin of a field point, in the run's orientation.</summary>
        public double ExactBinMean(int point, double[] full)
        {
            var (run, centre, half, _, _) = bins[point];
            var data = Runs[run];
            var pars = full.AsSpan(0, ParameterCount);
            var muModel = full[ParameterCount] + (full[ParameterCount + 1] * data.MuLab);
            var eval = Evaluator();
            var mean = 0.0;
            for (var g = 0; g < GaussNodes.Length; g++)
            {
                mean += GaussWeights[g] * data.Sign * eval.Evaluate(data.Sign * (centre + (half * GaussNodes[g])), muModel, pars, []);
            }

            return mean;
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
