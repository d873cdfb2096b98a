using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Bottleneck;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Analysis;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Bottleneck;

/// <summary>The noise floor: phase diffusion measured from the data, and runs where it dominates the bottleneck passage.</summary>
public class PhaseDiffusionTests(ITestOutputHelper output)
{
    private static readonly double[] Mus = [1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3];

    public static TheoryData<double, double, double> PassageCases()
    {
        // Reference/make_passage_reference.py: nested SciPy 1.10.1 quad of the mean first-passage integral.
        using var doc = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "Reference", "passage_reference.json")));
        var data = new TheoryData<double, double, double>();
        foreach (var c in doc.RootElement.GetProperty("cases").EnumerateArray())
        {
            data.Add(c.GetProperty("a").GetDouble(), c.GetProperty("D").GetDouble(), c.GetProperty("ratio").GetDouble());
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(PassageCases))]
    public void PassageRatio_MatchesSciPyQuadratureOfTheFirstPassageIntegral(double a, double d, double expected)
    {
        // b = 0.5 in every case. Our exponential stepping on 8000 cells of width ≤ L/4000 is second-order in the cell:
        // 10⁻³ relative covers it (the quadrature's own error is below 10⁻⁸).
        Assert.InRange(PhaseDiffusion.PassageRatio(a, 0.5, d), expected - 1e-3, expected + 1e-3);
    }

    [Fact]
    public void Diffusion_OfNoisyRotorRuns_IsRecoveredAndRunsNearOnsetAreFlagged()
    {
        // Euler–Maruyama with D = 0.003: near onset (a ≈ 0.01, b ≈ ½) noise shortens the passage by ~20% (see the
        // passage reference); far from it (a ≥ 0.1) by under 1%.
        const double d = 0.003;
        var template = new SimulationOptions { Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01, DynamicNoise = d, Seed = 3 };
        var report = SimulatedSet.Analyze(BuiltInModels.Rotor, Mus, template);
        foreach (var r in report.Runs)
        {
            output.WriteLine($"{r.Param}: D = {r.Noise?.Diffusion} σ = {r.Noise?.MeasurementSd} ratio {r.Noise?.PassageRatio} flags {string.Join(",", r.Flags)}");

            // Recovery within 4 block standard errors plus 15% (the drift correction uses the estimated field; common practice, no source).
            Assert.NotNull(r.Noise);
            Assert.InRange(r.Noise!.Diffusion.Value, (0.85 * d) - (4 * r.Noise.Diffusion.StandardError), (1.15 * d) + (4 * r.Noise.Diffusion.StandardError));
        }

        Assert.Contains(RunFlag.NoiseDominated, report.Runs[0].Flags);
        Assert.DoesNotContain(RunFlag.NoiseDominated, report.Runs[^1].Flags);
        Assert.Contains(report.Diagnostics, x => x.Code == "noise-dominated-runs");
        var used = report.FromBottleneck.Runs;
        Assert.True(used < Mus.Length, "noise-dominated runs must be left out of the bottleneck route");
    }

    [Fact]
    public void Diffusion_OfRunsWithMeasurementNoiseOnly_IsNearZeroAndNothingIsFlagged()
    {
        var template = new SimulationOptions { Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01, Seed = 8 };
        var report = SimulatedSet.Analyze(BuiltInModels.Rotor, Mus, template);
        foreach (var r in report.Runs)
        {
            output.WriteLine($"{r.Param}: D = {r.Noise?.Diffusion} σ = {r.Noise?.MeasurementSd}");
            Assert.DoesNotContain(RunFlag.NoiseDominated, r.Flags);

            // σ from the intercept 6σ² of the second-difference variance: within 10% of the simulated 0.01.
            Assert.InRange(r.Noise!.MeasurementSd, 0.009, 0.011);
        }
    }
}
