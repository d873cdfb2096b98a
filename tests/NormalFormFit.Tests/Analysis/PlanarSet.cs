using NormalFormFit.Analysis;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Analysis;

/// <summary>Simulates a set of runs of a planar system and analyses them in memory, as the command line would.</summary>
internal static class PlanarSet
{
    public static AnalysisReport Analyze(IPlanarSystem system, IReadOnlyList<double> mus, SimulationOptions template, double warmUp = 200.0)
    {
        var runs = new RunResult[mus.Count];
        for (var i = 0; i < mus.Count; i++)
        {
            var sim = PlanarSimulator.Run(system, template with { Mu = mus[i], Seed = template.Seed + (7919 * i) }, warmUp);
            runs[i] = SimulatedSet.AnalyzeOne(sim);
        }

        return OnsetAnalysis.Combine(runs);
    }
}
