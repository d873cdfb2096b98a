using NormalFormFit.Ingest;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Analysis;

namespace NormalFormFit.Tests.Field;

public class PhaseFieldTests
{
    [Fact]
    public void Field_OfNoisyRotorRun_FollowsMuMinusSinTheta()
    {
        // The reconstructed θ̇(θ) must be the model's right-hand side μ − sin θ (Adler 1946), within its bootstrap
        // band: |f̂ − f| ≤ 4·se + 0.002, the constant covering the bin-averaging of a curved field
        // (≤ max|f''|·(bin width)²/24 ≈ 1.1·0.05²/24 ≈ 1e-4) and the spline's smoothing bias at the fast side.
        const double mu = 1.1;
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = mu, Revolutions = 12, SamplingInterval = 0.01, MeasurementNoise = 0.01, Seed = 21 });
        var r = SimulatedSet.AnalyzeOne(sim);
        var f = r.Field!;
        var worst = 0.0;
        for (var j = 0; j < f.Centres.Length; j++)
        {
            var truth = mu - Math.Sin(f.Centres[j]);
            var excess = Math.Abs(f.Velocity[j] - truth) - (4 * f.StandardError[j]);
            worst = Math.Max(worst, excess);
        }

        Assert.True(worst <= 0.002, $"field leaves its band by {worst}");
    }

    [Fact]
    public void Field_UncertaintyBand_ShrinksWithMoreRevolutions()
    {
        // Block bootstrap over revolutions: the standard error scales as 1/√R (common practice, no source);
        // 4× the revolutions should roughly halve it (accept 0.3–0.75 for the sampling scatter of bootstrap SEs).
        static double MedianSe(int revolutions)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.2, Revolutions = revolutions, SamplingInterval = 0.01, MeasurementNoise = 0.02, Seed = 4 });
            var se = SimulatedSet.AnalyzeOne(sim).Field!.StandardError.Where(double.IsFinite).Order().ToArray();
            return se[se.Length / 2];
        }

        var ratio = MedianSe(32) / MedianSe(8);
        Assert.InRange(ratio, 0.3, 0.75);
    }
}
