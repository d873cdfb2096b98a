using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Analysis;

/// <summary>Simulates a set of runs and analyses them in memory (no files), as the command line would.</summary>
internal static class SimulatedSet
{
    public static AnalysisReport Analyze(IPhaseModel model, IReadOnlyList<double> mus, SimulationOptions template, RunOptions? runOptions = null)
    {
        var runs = new RunResult[mus.Count];
        for (var i = 0; i < mus.Count; i++)
        {
            var sim = Simulator.Run(model, template with { Mu = mus[i], Seed = GaussianSource.DeriveSeed(template.Seed, i) });
            runs[i] = AnalyzeOne(sim, runOptions);
        }

        return OnsetAnalysis.Combine(runs);
    }

    public static RunResult AnalyzeOne(SimulatedRun sim, RunOptions? runOptions = null)
    {
        var rec = new PhaseRecording($"mu={sim.Mu}", sim.Time, sim.Phase, [0]);
        return RunAnalyzer.Analyze(Trajectory.FromRecording(rec), sim.Mu, rec.File, null, runOptions);
    }
}
