using System.Globalization;
using MathNet.Numerics.Distributions;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Numerics;
using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>Diagnostic codes of a comparison that mean "valid input, but the data cannot answer" (exit code 3).</summary>
public static class CompareFailures
{
    /// <summary>Fewer data points than unknowns, or no turning run with a field.</summary>
    public const string TooFewPoints = "compare-too-few-points";

    /// <summary>The model cannot be evaluated or fitted (non-finite values at the start, singular fit).</summary>
    public const string CannotFit = "compare-cannot-fit";

    /// <summary>The fit ended on a non-finite parameter or onset: no answer to report, consistent or not.</summary>
    public const string NoAnswer = "compare-no-answer";
}

/// <summary>
/// Fits a user's phase model θ̇ = f(θ, μ_model; p), μ_model = c₀ + c₁·μ_lab, jointly to the reconstructed fields
/// θ̇(θ) and the measured periods of all runs, and tests whether it holds against the data's own scatter.
/// </summary>
/// <remarks>
/// <para><b>Fit.</b> Weighted least squares of the fields' bin means and the measured frequencies
/// (<see cref="ComparisonProblem"/>) by Levenberg–Marquardt (<see cref="LevenbergMarquardt"/>). The weights 1/SE² only
/// shape the fit; its errors are not taken from them.</para>
/// <para><b>Errors and verdict</b> come from a parametric bootstrap of the whole pipeline (<see cref="ParametricBootstrap"/>;
/// Efron &amp; Tibshirani 1993, ch. 6) in two stages: a pilot at the fit q̂ estimates the bias, and the main stage is
/// simulated at the fit less that bias, q_c. Verdict: Monte-Carlo test (Barnard 1963) of Q = Σr²,
/// p = (1 + #{Q*_b ≥ Q})/(B + 1), a failed replicate counting as exceeding Q. Parameters and onset
/// (<see cref="OnsetSearch"/>): bias b = mean(q*) − q_c removed, SE = sd(q*)·√(1 + 1/B), 95% interval
/// q̃ ± t₀.₉₇₅,B−1·SE (Efron &amp; Tibshirani 1993, §10.6). The replicates' seed is the options' seed mixed with a
/// fingerprint of the data. Why each of these choices, with the measurements behind them: docs/compare-notes.md.</para>
/// <para>Cost: (pilot + B + 1) × (simulation and analysis of every run + one fit).</para>
/// </remarks>
public static class ModelComparer
{
    /// <summary>Compares <paramref name="model"/> with analysed runs; the replicates are analysed with the runs' own options.</summary>
    /// <param name="data">The runs (those that do not turn or have no field are left out) and the options they were analysed with.</param>
    /// <param name="model">The parsed model expression.</param>
    /// <param name="options">Options; defaults when null.</param>
    /// <returns>The comparison, or the diagnostics that explain why there is none.</returns>
    public static Loaded<ModelComparison> Compare(AnalysedRunSet data, ModelExpression model, CompareOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(data);
        ArgumentNullException.ThrowIfNull(model);
        options ??= CompareOptions.Default;
        var problems = CheckOptions(model, options);
        if (problems.Count > 0)
        {
            return new Loaded<ModelComparison>(null, [.. problems.Select(p => new Diagnostic(Severity.Error, "bad-option", p))]);
        }

        var requirements = ModelRequirements.Check(model);
        if (requirements.Any(d => d.Severity == Severity.Error))
        {
            return new Loaded<ModelComparison>(null, [.. requirements.Where(d => d.Severity == Severity.Error)]);
        }

        var problem = ComparisonProblem.Build(data.Runs.Runs, model, options, null);
        var notes = new List<Diagnostic>(requirements);

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

        var fit = LevenbergMarquardt.Minimize(problem.Evaluate, problem.StartVector(), new LevenbergMarquardtOptions { MaxIterations = options.MaxIterations });
        if (fit.Exit == LevenbergMarquardtExit.InvalidStart)
        {
            return Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.CannotFit,
                "the model gives no finite value at the starting parameters (e.g. log or sqrt of a negative number, or a division by zero): give starting values with --start"));
        }

        // Turning sense: a fit whose model stops or turns the wrong way in some run is restarted once from the map
        // reversed (c0, c1 → −c0, −c1), which puts the model's speeds on the other side of zero; the better fit that
        // turns with every run is kept.
        if (!TurnsWithEveryRun(problem, fit) && options.FixedOffset is null && options.FixedScale is null && model.UsesMu)
        {
            var reversedStart = problem.Expand(problem.StartVector());
            reversedStart[problem.ParameterCount] = -reversedStart[problem.ParameterCount];
            reversedStart[problem.ParameterCount + 1] = -reversedStart[problem.ParameterCount + 1];
            var reversed = ComparisonProblem.Build(data.Runs.Runs, model, options, reversedStart);
            var again = LevenbergMarquardt.Minimize(reversed.Evaluate, reversed.StartVector(), new LevenbergMarquardtOptions { MaxIterations = options.MaxIterations });
            if (again.Exit != LevenbergMarquardtExit.InvalidStart && TurnsWithEveryRun(reversed, again))
            {
                notes.Add(new Diagnostic(Severity.Info, "fit-restarted", "the first fit left the model stopped or turning against the runs in some run; it was restarted from the map reversed (c0, c1 → −c0, −c1) and that fit, which turns with every run, is kept"));
                problem = reversed;
                fit = again;
            }
        }

        notes.AddRange(SenseNotes(problem, fit));
        var backwardRuns = problem.Runs.Count(r => r.Sign < 0);
        var comparison = Finish(problem, model, options, data.Options.Run, fit, notes) with
        {
            Sense = backwardRuns == 0 ? TurningSense.Forward : backwardRuns == problem.RunCount ? TurningSense.Backward : TurningSense.Mixed,
        };
        return NoAnswer(comparison) is { } why
            ? Loaded.Fail<ModelComparison>(new Diagnostic(Severity.Error, CompareFailures.NoAnswer, why))
            : new Loaded<ModelComparison>(comparison, comparison.Diagnostics);
    }

    /// <summary>
    /// Compares <paramref name="model"/> with runs analysed with the default options (<see cref="AnalyzeOptions.Default"/>,
    /// as <see cref="RunAnalyzer.Analyze"/> does without options); runs analysed otherwise go through
    /// <see cref="Compare(AnalysedRunSet, ModelExpression, CompareOptions?)"/> with their options.
    /// </summary>
    /// <param name="runs">Run results analysed with the default options.</param>
    /// <param name="model">The parsed model expression.</param>
    /// <param name="options">Options; defaults when null.</param>
    /// <returns>The comparison, or the diagnostics that explain why there is none.</returns>
    public static Loaded<ModelComparison> Compare(IReadOnlyList<RunResult> runs, ModelExpression model, CompareOptions? options = null) =>
        Compare(AnalysedRunSet.WithDefaultOptions(runs), model, options);

    private static List<string> CheckOptions(ModelExpression model, CompareOptions options)
    {
        var problems = options.Validate().ToList();
        foreach (var taken in model.Parameters.Where(n => n is "c0" or "c1"))
        {
            problems.Add($"the parameter name '{taken}' is taken by the map μ_model = c0 + c1·μ_lab; rename the expression's parameter (e.g. k0)");
        }

        foreach (var name in options.Start.Keys.Concat(options.Fixed.Keys))
        {
            if (!model.Parameters.Contains(name))
            {
                problems.Add(model.Parameters.Count == 0
                    ? $"'{name}' is not a parameter: the expression has no free parameters."
                    : $"'{name}' is not a parameter of the expression; its parameters are {string.Join(", ", model.Parameters)}.");
            }
        }

        return problems;
    }

    private static bool TurnsWithEveryRun(ComparisonProblem problem, LevenbergMarquardtResult fit)
    {
        var full = problem.Expand(fit.Parameters);
        return fit.Parameters.All(double.IsFinite) && Enumerable.Range(0, problem.RunCount).All(i => problem.TurnsAt(full, i));
    }

    /// <summary>
    /// The turning sense of the runs as read (the phase increasing or decreasing in the file's own convention) and what
    /// it means for the fit: the model is fitted in the file's convention, so runs whose phase decreases need a model
    /// whose speed is negative there, which a reversed map (c1 &lt; 0) can give without a word; say so.
    /// </summary>
    private static IEnumerable<Diagnostic> SenseNotes(ComparisonProblem problem, LevenbergMarquardtResult fit)
    {
        var backward = problem.Runs.Count(r => r.Sign < 0);
        var scale = problem.Expand(fit.Parameters)[problem.ParameterCount + 1];
        if (backward > 0 && backward < problem.RunCount)
        {
            yield return new Diagnostic(Severity.Warning, "mixed-sense", string.Create(CultureInfo.InvariantCulture,
                $"the phase decreases in {backward} of {problem.RunCount} runs as read and increases in the others: one model cannot turn both ways at nearby μ unless its speed changes sign; check that every run was recorded with the same axes (e.g. --y-down for all image coordinates)"));
        }
        else if (backward == problem.RunCount)
        {
            yield return new Diagnostic(Severity.Info, "backward-sense",
                "the phase decreases in every run as read (clockwise in the file's axes): the model is fitted in that convention, so its speed is negative in the runs" +
                (scale < 0 ? "; the fitted map has c1 < 0 (the model's μ falls as the lab's rises), which is what a recording whose phase runs against the model's usually gives: for image coordinates pass --y-down, or write the model for the reversed phase" : string.Empty));
        }
    }

    /// <summary>Why <paramref name="c"/> is no answer (a parameter, the map or the onset not finite), or null.</summary>
    private static string? NoAnswer(ModelComparison c)
    {
        // A parameter the data do not determine is reported as unidentifiable (NaN with its own warning), not as an answer.
        var unidentifiable = c.Diagnostics.Any(d => d.Code == "unidentifiable");
        var bad = c.Parameters.Append(c.Offset).Append(c.Scale)
            .Where(p => !(unidentifiable && double.IsNaN(p.Value)))
            .FirstOrDefault(p => !double.IsFinite(p.Value) || !(double.IsFinite(p.StandardError) || p.Fixed));
        if (bad is not null)
        {
            return string.Create(CultureInfo.InvariantCulture,
                $"the fit ended with {bad.Name} = {Numerics.ErrorDigits.Plain(bad.Value, 6)} ± {Numerics.ErrorDigits.Plain(bad.StandardError, 3)}, not a finite estimate: the model cannot be checked against these runs; give starting values with --start, hold parameters with --fix, or simplify the model");
        }

        if (!double.IsFinite(c.Onset.Value))
        {
            return "the fitted model has no onset within reach of the runs (its minimum speed does not reach zero near their parameters): "
                + "it cannot be checked as a model of this onset; check the sign conventions of mu and theta, or hold the map with --fix c1=…";
        }

        return null;
    }

    private static ModelComparison Finish(ComparisonProblem problem, ModelExpression model, CompareOptions options, RunOptions analysis, LevenbergMarquardtResult fit, List<Diagnostic> notes)
    {
        var ic = CultureInfo.InvariantCulture;
        if (!fit.Converged)
        {
            notes.Add(new Diagnostic(Severity.Warning, "fit-not-converged", string.Create(ic,
                $"the fit stopped after {fit.Iterations} iterations without converging: the estimates may not be the best; try other --start values")));
        }

        var full = problem.Expand(fit.Parameters);
        var observed = Misfit.Of(problem, fit.Residuals, options.Regions);
        var finder = model.UsesMu ? new OnsetSearch(problem) : null;
        var bootstrap = new ParametricBootstrap(problem, finder, options, analysis);
        var onsetHat = finder?.Find(full) ?? double.NaN;

        // A model that stops where a run turns contradicts that run outright; there is nothing to simulate there.
        var stops = problem.Runs.Where((run, i) => !problem.TurnsAt(full, i)).ToList();
        var seed = problem.Fingerprint(options.Seed);
        var centreFree = stops.Count == 0 ? PilotCentre(problem, bootstrap, fit.Parameters, options, seed) : fit.Parameters;
        var centre = problem.Expand(centreFree);
        var onsetCentre = finder?.Find(centre) ?? double.NaN;
        var replicates = stops.Count == 0 ? bootstrap.Draw(centre, options.Replicates, seed) : [];
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
            freeSe[u] = ok.Count >= 2 ? inflate * Numerics.SampleStatistics.StandardDeviation(draws) : double.NaN;
            if (options.CorrectBias && ok.Count >= 2)
            {
                freeBias[u] = draws.Average() - centreFree[u];
                freeValue[u] -= freeBias[u];
            }
        }

        var fullValue = problem.Expand(freeValue);
        var pCount = model.Parameters.Count;
        var unidentifiable = Identifiability.Unidentifiable(problem, fit.Parameters);
        FittedParameter Parameter(string name, int f)
        {
            var free = problem.FreeIndexOf(f);
            return free < 0
                ? new FittedParameter(name, fullValue[f], 0.0, true)
                : unidentifiable.Contains(free)
                    ? new FittedParameter(name, double.NaN, double.NaN, false) { Quantile = t }
                    : new FittedParameter(name, fullValue[f], freeSe[free], false) { Quantile = t, Bias = freeBias[free] };
        }

        var parameters = Enumerable.Range(0, pCount).Select(i => Parameter(model.Parameters[i], i)).ToList();
        var offset = Parameter("c0", pCount);
        var scaleMap = Parameter("c1", pCount + 1);
        var names = parameters.Append(offset).Append(scaleMap).Where(q => !q.Fixed && double.IsNaN(q.Value)).Select(q => q.Name).ToList();
        if (names.Count > 0)
        {
            notes.Add(new Diagnostic(Severity.Warning, "unidentifiable", string.Create(ic,
                $"the data do not determine {string.Join(", ", names)}: the fit's information matrix is singular or near-singular in {(names.Count == 1 ? "it" : "them")} (the model does not depend on {(names.Count == 1 ? "it" : "them")}, or only through a combination); no value or error is given: hold {(names.Count == 1 ? "it" : "them")} with --fix or change the model")));
        }

        // Onset and its interval, from the replicates' onsets alike.
        var onset = new Estimate(onsetHat, double.NaN);
        var ci = new Interval(double.NaN, double.NaN);
        if (finder is not null && double.IsFinite(onsetHat) && ok.Count >= 2)
        {
            var onsets = ok.Select(x => x.Onset).Where(double.IsFinite).ToList();
            if (onsets.Count == ok.Count)
            {
                var value = options.CorrectBias ? onsetHat - (onsets.Average() - onsetCentre) : onsetHat;
                var se = inflate * Numerics.SampleStatistics.StandardDeviation(onsets);
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

        var (runMisfits, regions) = Misfit.Summaries(problem, observed, ok);
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
                $"the model does not fit within the data's own scatter: Q = {Numerics.ErrorDigits.Plain(observed.Total, 4)} is exceeded by {exceed} of {replicates.Length} run sets simulated from the fitted model (p = {Numerics.ErrorDigits.Plain(p, 2)}); worst run {worstRuns[0].File} (μ = {Numerics.ErrorDigits.Plain(worstRuns[0].Param, 6)}), worst phase region [{worstRegions[0].From:F2}, {worstRegions[0].To:F2})")));
        }

        return new ModelComparison(
            model.Text, parameters, offset, scaleMap, onset, ci, observed.Total, expected, p, consistent, problem.Points,
            runMisfits, regions, worstRuns, worstRegions, notes)
        {
            ReplicateStatistics = [.. ok.Select(x => x.Misfit.Total)],
            FailedReplicates = failed,
            Iterations = fit.Iterations,
            BiasCorrected = !ReferenceEquals(centreFree, fit.Parameters),
        };
    }

    /// <summary>
    /// The centre of the main stage: the fit less the bias a pilot bootstrap at the fit estimates (when bias correction
    /// and the pilot are on, at least two pilot replicates succeed and the shifted model still turns at every run's μ),
    /// else the fit itself. It puts the main stage nearer the truth than the fit, which carries the smoothing bias.
    /// </summary>
    private static double[] PilotCentre(ComparisonProblem problem, ParametricBootstrap bootstrap, double[] fitted, CompareOptions options, int seed)
    {
        if (!options.CorrectBias || options.PilotReplicates <= 0)
        {
            return fitted;
        }

        var pilot = bootstrap.Draw(problem.Expand(fitted), options.PilotReplicates, GaussianSource.DeriveSeed(seed, 1));
        var pilotOk = pilot.Where(x => x is not null).Select(x => x!).ToList();
        if (pilotOk.Count < 2)
        {
            return fitted;
        }

        var shifted = fitted.Select((q, u) => q - (pilotOk.Average(x => x.Free[u]) - q)).ToArray();
        var shiftedFull = problem.Expand(shifted);
        return Enumerable.Range(0, problem.RunCount).All(i => problem.TurnsAt(shiftedFull, i)) ? shifted : fitted;
    }

}
