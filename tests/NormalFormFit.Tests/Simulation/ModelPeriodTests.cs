using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Simulation;

/// <summary>Periods measured on simulated noise-free trajectories against the closed forms.</summary>
public class ModelPeriodTests
{
    [Theory]
    [InlineData(1.02)]
    [InlineData(1.1)]
    [InlineData(1.5)]
    [InlineData(3.0)]
    public void Period_OfDrivenRotor_MatchesAdlerClosedForm(double mu)
    {
        // Reference: Adler (1946), T = 2π/√(μ² − 1), written out here rather than taken from the model.
        var expected = 2.0 * Math.PI / Math.Sqrt((mu * mu) - 1.0);
        AssertSimulatedPeriod(BuiltInModels.Rotor, mu, expected);
    }

    [Theory]
    [InlineData(0.01)]
    [InlineData(0.1)]
    [InlineData(1.0)]
    [InlineData(4.0)]
    public void Period_OfThetaNeuron_MatchesErmentroutKopellClosedForm(double mu)
    {
        // Reference: Ermentrout & Kopell (1986), T = π/√μ.
        var expected = Math.PI / Math.Sqrt(mu);
        AssertSimulatedPeriod(BuiltInModels.ThetaNeuron, mu, expected);
    }

    [Fact]
    public void Rk4_HalvingTheStep_ShrinksTheDifferenceSixteenfold()
    {
        // Fourth order (common practice, no source): successive differences of the end phase at steps h, h/2, h/4
        // shrink by 2⁴ = 16. h = 0.1 keeps the differences (≈1e-6) far above round-off (≈1e-13); the band 12–20
        // allows for the next term of the error expansion.
        double EndPhase(int substeps) => Simulator.Run(BuiltInModels.Rotor, new SimulationOptions
        {
            Mu = 1.5,
            SamplingInterval = 0.4,
            Substeps = substeps,
            Revolutions = 1000,
            MaxDuration = 20.0,
            InitialPhase = 0.3,
        }).TruePhase[^1];

        var coarse = EndPhase(4) - EndPhase(8);
        var fine = EndPhase(8) - EndPhase(16);
        Assert.InRange(coarse / fine, 12.0, 20.0);
    }

    private static void AssertSimulatedPeriod(IPhaseModel model, double mu, double expected)
    {
        var options = new SimulationOptions { Mu = mu, Revolutions = 10, Seed = 7 };
        var run = Simulator.Run(model, options);
        Assert.True(run.ReachedRevolutions);
        Assert.Equal(10, run.Revolutions);

        // Crossings of θ = 2πk by linear interpolation between samples.
        var crossings = new List<double>();
        double interpolationBound = 0.0;
        var dt = options.SamplingInterval;
        var theta = run.TruePhase;
        for (var i = 1; i < theta.Length; i++)
        {
            var level = 2.0 * Math.PI * Math.Floor(theta[i] / (2.0 * Math.PI));
            if (theta[i - 1] < level && theta[i] >= level)
            {
                var t = run.Time[i - 1] + ((level - theta[i - 1]) / (theta[i] - theta[i - 1]) * dt);
                crossings.Add(t);
                interpolationBound = Math.Max(interpolationBound, LocalInterpolationBound(model, mu, level, dt));
            }
        }

        Assert.True(crossings.Count >= 9, $"{crossings.Count} crossings");
        var intervals = crossings.Count - 1;
        var measured = (crossings[^1] - crossings[0]) / intervals;

        // Tolerance: linear interpolation of θ(t) errs by at most dt²/8·max|θ̈| in phase, i.e. by
        // dt²/8·max|f·f'|/min|f| in time near the crossing (θ̈ = f'f), evaluated over the phases one sample can span.
        // The mean over n intervals uses two crossings: error ≤ 2·bound/n. RK4 at the default step
        // (h·max(|f|, |f'|) ≤ 0.02, (0.02)⁴ ≈ 2e-7 before RK4's small error constants) gave period errors below 1e-10
        // relative against eight times the substeps for these μ; we allow 1e-8·T. Forward Euler at the same step
        // errs by about 1e-6 relative and fails.
        var tolerance = (2.0 * interpolationBound / intervals) + (1e-8 * expected);
        Assert.True(
            Math.Abs(measured - expected) <= tolerance,
            $"measured {measured:R}, expected {expected:R}, tolerance {tolerance:G3}");
    }

    private static double LocalInterpolationBound(IPhaseModel model, double mu, double level, double dt)
    {
        var reach = 1.5 * dt * MaxSpeed(model, mu);
        double maxCurvature = 0.0, minSpeed = double.PositiveInfinity;
        for (var k = -50; k <= 50; k++)
        {
            var theta = level + (reach * k / 50.0);
            var f = model.Velocity(theta, mu);
            var slope = (model.Velocity(theta + 1e-6, mu) - model.Velocity(theta - 1e-6, mu)) / 2e-6;
            maxCurvature = Math.Max(maxCurvature, Math.Abs(f * slope));
            minSpeed = Math.Min(minSpeed, Math.Abs(f));
        }

        return dt * dt / 8.0 * maxCurvature / minSpeed;
    }

    private static double MaxSpeed(IPhaseModel model, double mu)
    {
        var max = 0.0;
        for (var k = 0; k < 720; k++)
        {
            max = Math.Max(max, Math.Abs(model.Velocity(k * Math.PI / 360.0, mu)));
        }

        return max;
    }
}
