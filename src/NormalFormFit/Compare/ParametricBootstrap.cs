using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Numerics;
using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>One replicate's fit: its statistic Q* = Σr², free parameters, onset and misfit sums.</summary>
internal sealed record Replicate(double Statistic, double[] Free, double Onset, Misfit Misfit);

/// <summary>
/// Parametric bootstrap of a model comparison (Efron &amp; Tibshirani 1993, ch. 6; Davison &amp; Hinkley 1997, §2.2
/// and §4.2): the whole pipeline repeated on runs simulated from a fitted model. Each run is re-simulated at its μ with
/// its own sampling interval and duration (at the run's own sample times when frames are missing or the clock is
/// irregular: <see cref="SamplingPattern"/>), a random initial phase and the noise its analysis found
/// (<see cref="ReplicateNoise"/>), then analysed with the very options the data were analysed with, and fitted as the
/// data were. Cost per replicate: one simulation and analysis of every run and one fit. See docs/compare-notes.md.
/// </summary>
/// <param name="problem">The data's problem (runs, free parameters, points).</param>
/// <param name="onsets">The onset search, or null when the model has no μ.</param>
/// <param name="options">The comparison's options (fit, regions, parallelism).</param>
/// <param name="analysis">The per-run analysis options that produced the data's runs.</param>
internal sealed class ParametricBootstrap(ComparisonProblem problem, OnsetSearch? onsets, CompareOptions options, RunOptions analysis)
{
    /// <summary><paramref name="count"/> replicates simulated at the full parameters <paramref name="full"/>; null where one failed.</summary>
    public Replicate?[] Draw(double[] full, int count, int seed)
    {
        var results = new Replicate?[count];
        var parallel = new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, options.Parallelism) };
        Parallel.For(0, count, parallel, b => results[b] = One(full, seed, b));
        return results;
    }

    private Replicate? One(double[] full, int seed, int b)
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
            var sampling = SamplingPattern.Of(source.SampleTimes);
            var runSeed = GaussianSource.DeriveSeed(GaussianSource.DeriveSeed(seed, b), i);
            SimulatedRun sim;
            try
            {
                sim = Simulator.Run(fitted, new SimulationOptions
                {
                    Mu = full[pCount] + (full[pCount + 1] * source.Param),
                    Revolutions = (int)Math.Min(Math.Ceiling(source.Turns) + 2, int.MaxValue),
                    SamplingInterval = sampling?.SimulationStep ?? dt,
                    MaxDuration = source.Duration,
                    MeasurementNoise = sampling is null && double.IsFinite(sigma) ? sigma : 0.0,
                    DynamicNoise = diffusion,
                    Seed = runSeed,
                });
            }
            catch (ArgumentException)
            {
                return null; // the fitted model cannot be simulated here (e.g. too stiff)
            }

            if (sampling is not null)
            {
                var (time, phase) = sampling.Sample(sim.Time, sim.TruePhase, double.IsFinite(sigma) ? sigma : 0.0, runSeed);
                sim = sim with { Time = time, Phase = phase };
            }

            var recording = new PhaseRecording(source.File, sim.Time, sim.Phase, [0]);
            var rebuilt = RunAnalyzer.Analyze(Trajectory.FromRecording(recording), source.Param, source.File, source.Label, analysis);
            if (!rebuilt.IsTurning || rebuilt.Field is null)
            {
                return null;
            }

            runs.Add(rebuilt);
        }

        var replica = ComparisonProblem.Build(runs, problem.Model, options, full);
        if (replica.RunCount != problem.RunCount || replica.Points <= replica.FreeCount)
        {
            return null;
        }

        var fit = LevenbergMarquardt.Minimize(replica.Evaluate, replica.StartVector(), new LevenbergMarquardtOptions { MaxIterations = options.MaxIterations });
        if (fit.Exit == LevenbergMarquardtExit.InvalidStart || fit.Parameters.Any(x => !double.IsFinite(x)))
        {
            return null;
        }

        var misfit = Misfit.Of(replica, fit.Residuals, options.Regions);
        var onset = onsets?.Find(replica.Expand(fit.Parameters)) ?? double.NaN;
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
}
