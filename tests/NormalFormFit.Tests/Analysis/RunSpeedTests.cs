using System.Diagnostics;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// Prints the time of one run's analysis (spline + field + bottleneck + periods) at 10⁵ and 10⁶ samples.
/// It never asserts a wall-clock time (the machine is shared); it asserts only that the answer stays right.
/// Run: dotnet test NormalFormFit.sln -c Release --settings tests/NormalFormFit.Tests/speed.runsettings --logger "console;verbosity=detailed".
/// </summary>
[Trait("Category", "Speed")]
public class RunSpeedTests(ITestOutputHelper output)
{
    [Theory]
    [InlineData(100_000)]
    [InlineData(1_000_000)]
    public void AnalyzeOneRun_PrintsTimeAndKeepsTheAnswer(int samples)
    {
        // Rotor at μ = 1.05: a = 0.05, b = ½ (Taylor expansion of μ − sin θ at π/2, common practice, no source).
        const double mu = 1.05;
        var period = 2 * Math.PI / Math.Sqrt((mu * mu) - 1);
        var revolutions = 40;
        var dt = revolutions * period / samples;
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = mu, Revolutions = revolutions, SamplingInterval = dt, MeasurementNoise = 0.01, Seed = 9 });
        var rec = new PhaseRecording("speed", sim.Time, sim.Phase, [0]);
        var best = double.PositiveInfinity;
        RunResult? r = null;
        for (var k = 0; k < 3; k++)
        {
            var sw = Stopwatch.StartNew();
            r = RunAnalyzer.Analyze(Trajectory.FromRecording(rec), mu, "speed");
            best = Math.Min(best, sw.Elapsed.TotalSeconds);
        }

        output.WriteLine($"{sim.Time.Length} samples: best of 3 = {best:F3} s ({best / sim.Time.Length * 1e9:F0} ns/sample)");
        Assert.InRange(r!.Bottleneck!.A.Value, 0.045, 0.055);
    }
}
