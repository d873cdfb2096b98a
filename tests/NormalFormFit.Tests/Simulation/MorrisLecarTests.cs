using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Simulation;

/// <summary>Morris–Lecar as a planar system: its recorded phase turns once per spike.</summary>
public class MorrisLecarTests
{
    [Fact]
    public void PlanarRun_TurnsOncePerSpike_WithTheSpikeIntervalAsItsPeriod()
    {
        // Two μA/cm² above the fold of rest states, the same RK4 step (0.05 ms) both ways. Simulate: period from the
        // upward crossings of V = 0 (linearly interpolated). Planar run: five whole turns of the phase take five periods
        // up to one sample (0.05 ms in about 650 ms, 1e-4 relative); 1e-3 relative covers that and the interpolation.
        var model = MorrisLecar.ClassOne;
        var current = model.RestSaddleNode().Current + 2.0;
        var track = model.Simulate(current, spikes: 6, step: 0.05, every: 1);
        var crossings = new List<double>();
        for (var i = 1; i < track.Time.Length; i++)
        {
            if (track.V[i - 1] < 0 && track.V[i] >= 0)
            {
                crossings.Add(track.Time[i - 1] - (track.V[i - 1] * (track.Time[i] - track.Time[i - 1]) / (track.V[i] - track.V[i - 1])));
            }
        }

        var spikePeriod = (crossings[^1] - crossings[0]) / (crossings.Count - 1);
        var run = PlanarSimulator.Run(
            model,
            new SimulationOptions { Mu = current, SamplingInterval = 0.05, Substeps = 1, Revolutions = 5, WrapPhase = false },
            warmUp: 1000.0);

        Assert.True(run.ReachedRevolutions);
        Assert.Equal(5, run.Revolutions);
        Assert.Equal(5.0 * spikePeriod, run.Time[^1], 5e-3 * spikePeriod);
        Assert.True(run.TruePhase[^1] > run.TruePhase[0], "the cycle turns counterclockwise in (V, w)");
    }

    [Fact]
    public void Start_IsTheStateSimulateStartsFrom()
    {
        var (v, w) = MorrisLecar.ClassOne.Start(40.0);

        Assert.Equal(-40.0, v);
        Assert.Equal(0.5 * (1 + Math.Tanh((-40.0 - 12.0) / 17.4)), w, 1e-15);
    }
}
