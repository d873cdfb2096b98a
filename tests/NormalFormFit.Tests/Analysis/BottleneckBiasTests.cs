using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// The bottleneck route off the tuned scenario: six rotor runs θ̇ = μ − sin θ (μc = 1, Adler 1946), random starting
/// phase, five revolutions each, over a factor four in measurement noise. Before the
/// Taylor terms of the field were removed from the parabola fit (<c>Bottleneck/TaylorRemainder.cs</c>), a was biased by
/// about +0.055a² (the quartic −x⁴/24 of the field over a window w ∝ √a): 37–40 of 40 estimates lay above the onset and
/// the interval covered in 24–31 of 40 at every noise level (and with ten revolutions a run).
/// </summary>
public class BottleneckBiasTests(ITestOutputHelper output)
{
    // Bands from tests/NormalFormFit.Tests/Reference/onset_calibration_bands.py (SciPy 1.10.1):
    // coverage binom.ppf(0.005, 60, 0.95) = 52 (upper end 60); estimates above the truth binom.ppf(0.005 / 0.995, 60, 0.5) = [20, 40].
    private const int Repeats = 60;
    private const int CoverageLow = 52;
    private const int SignLow = 20;
    private const int SignHigh = 40;

    public static TheoryData<double, int> Scenarios => new()
    {
        { 0.02, 5 },
        { 0.01, 5 },
        { 0.005, 5 },
    };

    // Open: with ten revolutions a run (noise 0.02) the estimates are balanced (82 of 160 above the onset, mean z −0.08)
    // but the interval covers in 143 of 160 (89%, RMS z 1.76: a few large misses), below the band; docs/methods.md §6.

    [Theory]
    [MemberData(nameof(Scenarios))]
    public void BottleneckRoute_OnSixRotorRuns_CoversTheOnsetWithEstimatesOnBothSides(double noise, int revolutions)
    {
        Assert.True(BuiltInModels.TryGet("rotor", out var model));
        double[] mus = [1.02, 1.04, 1.07, 1.1, 1.15, 1.2];
        var z = new List<double>();
        var covered = 0;
        var above = 0;
        for (var r = 0; r < Repeats; r++)
        {
            var template = new SimulationOptions { Revolutions = revolutions, SamplingInterval = 0.02, MeasurementNoise = noise, Seed = 7100 + (r * 41) };
            var est = SimulatedSet.Analyze(model, mus, template).FromBottleneck;
            Assert.True(est.IsAvailable);
            covered += est.Ci95.Contains(1.0) ? 1 : 0;
            above += est.Value > 1.0 ? 1 : 0;
            z.Add((est.Value - 1.0) / est.StandardError);
        }

        var rmsZ = Math.Sqrt(z.Average(x => x * x));
        output.WriteLine($"noise {noise}, {revolutions} revolutions: covered {covered}/{Repeats}, above {above}/{Repeats}, mean z {z.Average():F2}, RMS z {rmsZ:F2}");
        Assert.InRange(covered, CoverageLow, Repeats);
        Assert.InRange(above, SignLow, SignHigh);

        // The other side: intervals much too wide would cover every time. A calibrated z has RMS 1 (normal) to √2
        // (Student-t on 4 degrees of freedom); below 0.7 the standard errors would be about 1.4 times too large.
        Assert.InRange(rmsZ, 0.7, 2.5);
    }
}
