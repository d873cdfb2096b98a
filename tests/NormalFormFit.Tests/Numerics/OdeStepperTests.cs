using NormalFormFit.Numerics;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Numerics;

/// <summary>The RK4 and Euler–Maruyama steps against solutions known in closed form.</summary>
public class OdeStepperTests
{
    /// <summary>ẋ₀ = a·x₀, ẋ₁ = 0.</summary>
    private readonly struct Growth(double a) : IPlanarField
    {
        public void Rate(double x0, double x1, out double rate0, out double rate1)
        {
            rate0 = a * x0;
            rate1 = 0.0;
        }
    }

    /// <summary>Harmonic oscillator ẋ₀ = x₁, ẋ₁ = −x₀: x₀ = cos t, x₁ = −sin t from (1, 0).</summary>
    private readonly struct Oscillator : IPlanarField
    {
        public void Rate(double x0, double x1, out double rate0, out double rate1)
        {
            rate0 = x1;
            rate1 = -x0;
        }
    }

    [Fact]
    public void RungeKutta4_OnLinearGrowth_IsTheTaylorPolynomialOfDegreeFour()
    {
        // For ẋ = ax, z = ha, the stages are k₁ = ax, k₂ = a(1 + z/2)x, k₃ = a(1 + z/2 + z²/4)x,
        // k₄ = a(1 + z + z²/2 + z³/4)x, so one step multiplies x by 1 + z + z²/2 + z³/6 + z⁴/24 (by hand). z = 0.1:
        // 1.1051708333…; rounding of a few operations only, so 1e-15.
        double x0 = 1.0, x1 = 7.0;
        OdeStepper.RungeKutta4(new Growth(2.0), 0.05, ref x0, ref x1);

        const double z = 0.1;
        Assert.Equal(1 + z + (z * z / 2) + (z * z * z / 6) + (z * z * z * z / 24), x0, 1e-15);
        Assert.Equal(7.0, x1);
    }

    [Fact]
    public void RungeKutta4_OnTheHarmonicOscillator_HasFourthOrderGlobalError()
    {
        // One period (t = 2π) with N and 2N steps: the error in (cos t, −sin t) falls by 2⁴ = 16 for a fourth-order
        // method. The ratio's deviation from 16 is O(h) (next error term); at N = 50 and 100 it stays within 15 to 17.
        static double Error(int steps)
        {
            double x0 = 1.0, x1 = 0.0;
            var h = 2.0 * Math.PI / steps;
            for (var i = 0; i < steps; i++)
            {
                OdeStepper.RungeKutta4(new Oscillator(), h, ref x0, ref x1);
            }

            return Math.Sqrt(((x0 - 1.0) * (x0 - 1.0)) + (x1 * x1));
        }

        var ratio = Error(50) / Error(100);

        Assert.InRange(ratio, 15.0, 17.0);
    }

    [Fact]
    public void EulerMaruyama_WithoutNoise_IsTheEulerStep()
    {
        // x += F(x)h: for ẋ₀ = x₁, ẋ₁ = −x₀ from (1, 2) with h = 0.5: (1 + 2·0.5, 2 − 1·0.5) = (2, 1.5) exactly.
        double x0 = 1.0, x1 = 2.0;
        OdeStepper.EulerMaruyama(new Oscillator(), 0.5, 0.0, 0.0, ref x0, ref x1);

        Assert.Equal(2.0, x0);
        Assert.Equal(1.5, x1);
    }

    [Fact]
    public void EulerMaruyama_OnOrnsteinUhlenbeck_HasTheSchemesStationaryVariance()
    {
        // dx = −x dt + √(2D) dW. The scheme is x' = (1 − h)x + √(2Dh)Z, an AR(1) process with stationary variance
        // 2Dh/(1 − (1 − h)²) = D/(1 − h/2) (analytic; the exact process has D). D = 0.5, h = 0.05: 0.51282….
        // 400 000 steps of an AR(1) with correlation time 1/h = 20 steps give about 10⁴ independent values, a relative
        // SE of the variance of √(2/10⁴) ≈ 1.4 %; 5 % is three and a half SEs (seeded: deterministic).
        const double d = 0.5, h = 0.05;
        var noise = GaussianSource.Create(2024, stream: 0);
        var kick = Math.Sqrt(2.0 * d * h);
        double x = 0.0, rest = 0.0, sum = 0.0, sumSq = 0.0;
        const int burnIn = 1000, steps = 400_000;
        for (var i = 0; i < burnIn + steps; i++)
        {
            OdeStepper.EulerMaruyama(new Growth(-1.0), h, kick * noise.Next(), 0.0, ref x, ref rest);
            if (i >= burnIn)
            {
                sum += x;
                sumSq += x * x;
            }
        }

        var variance = (sumSq - (sum * sum / steps)) / (steps - 1);
        var expected = d / (1.0 - (h / 2.0));

        Assert.Equal(expected, variance, 0.05 * expected);
        Assert.Equal(0.0, rest);
    }
}
