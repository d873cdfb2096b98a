using NormalFormFit.Simulation;
using NormalFormFit.Tests.Ingest;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// Invented demo scenario holding every kind of per-run result a run line carries: the rotor θ̇ = μ − sin θ filmed by a
/// camera at four μ above onset (positions: an orbit), two noisy runs at rest below onset (phase: a relaxation), and one
/// run recorded as spike times (events: periods only). Deterministic: fixed seeds.
/// </summary>
internal static class MixedRunScenario
{
    /// <summary>Writes the recordings and their manifest into <paramref name="files"/>; returns the manifest's path.</summary>
    public static string Write(RecordingFiles files)
    {
        double[] filmed = [1.02, 1.04, 1.07, 1.1];
        for (var i = 0; i < filmed.Length; i++)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = filmed[i], Revolutions = 5, SamplingInterval = 0.02, Seed = 41 + i });
            var track = CameraView.Project(sim, 1.0 / 2.4, new CameraOptions { Seed = 400 + i });
            files.AddRun($"cam{i}.csv", filmed[i], "t,x,y", track.Time, track.X, track.Y);
        }

        double[] resting = [0.97, 0.98];
        for (var i = 0; i < resting.Length; i++)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions
            {
                Mu = resting[i],
                Revolutions = 5,
                SamplingInterval = 0.02,
                MeasurementNoise = 0.01,
                MaxDuration = 150,
                Seed = GaussianSource.DeriveSeed(21, i),
            });
            files.AddRun($"rest{i}.csv", resting[i], "t,theta", sim.Time, sim.Phase);
        }

        var spiking = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.2, Revolutions = 6, SamplingInterval = 0.02, Seed = 47 });
        files.AddRun("spikes.csv", 1.2, "spike_time", CameraView.CrossingTimes(spiking.Time, spiking.TruePhase, Math.PI));
        return files.WriteManifest();
    }
}
