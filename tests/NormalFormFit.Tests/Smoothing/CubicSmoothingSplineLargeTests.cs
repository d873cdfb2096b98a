using System.Diagnostics;
using NormalFormFit.Smoothing;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Smoothing;

/// <summary>Long, non-uniform records with a gap: where SciPy 1.10's GCV search fails as ill-posed.</summary>
public class CubicSmoothingSplineLargeTests(ITestOutputHelper output)
{
    [Fact]
    public void Fit_ByGcv_OnMillionNonUniformSamplesWithHundredfoldGap_GivesAccurateDerivative()
    {
        var (t, y) = Record(1_000_000, seed: 23);

        var fit = CubicSmoothingSpline.Fit(t, y);

        // Truth f' = 1 + 0.5·cos t (t up to 20π; f'' = 0 at both ends, no boundary bias). Noise half-width
        // 1e-3 (σ = 5.8e-4) at spacing Δ ≈ 6.3e-5: a central difference over 1000 samples (0.063) would
        // have an r.m.s. error of σ√2/0.063 ≈ 1.3e-2; GCV must beat that in r.m.s. and stay below 4× it
        // at worst (extreme of 10⁶ near-Gaussian errors ≈ 5 sd; the gap adds interpolation over 100 Δ).
        double worst = 0.0, sumSquares = 0.0;
        for (int i = 0; i < t.Length; i++)
        {
            double e = fit.FirstDerivatives[i] - (1.0 + (0.5 * Math.Cos(t[i])));
            Assert.True(double.IsFinite(e));
            worst = Math.Max(worst, Math.Abs(e));
            sumSquares += e * e;
        }

        double rms = Math.Sqrt(sumSquares / t.Length);
        output.WriteLine($"λ = {fit.Lambda:E3}, tr A = {fit.EffectiveDegreesOfFreedom:F1}, r.m.s. error of f' = {rms:E2}, max = {worst:E2}");
        Assert.True(rms < 1.3e-2, $"r.m.s. error of f' = {rms:E2}");
        Assert.True(worst < 5.2e-2, $"max error of f' = {worst:E2}");

        // Sensible λ: neither interpolation nor a straight line.
        Assert.InRange(fit.EffectiveDegreesOfFreedom, 10.0, t.Length / 10.0);

        // Residual variance estimates σ² = (2e-3)²/12 = 3.3e-7 (uniform noise); n − tr A ≈ n makes its
        // sampling error ≈ √(1.8/n) ≈ 0.13 %, bias from the smoothing is second order: 2 % bound.
        Assert.Equal(4e-6 / 12.0, fit.ResidualVariance, 0.02 * 4e-6 / 12.0);
    }

    [Fact]
    [Trait("Category", "Speed")]
    public void Fit_ByGcv_TimingsForHundredThousandAndMillionSamples_ArePrinted()
    {
        // Prints wall-clock and process CPU time (best of 2) and never asserts on them: timing depends on
        // the machine and its load. Exclude it from routine runs with --filter Category!=Speed.
        foreach (int n in new[] { 100_000, 1_000_000 })
        {
            var (t, y) = Record(n, seed: 29);
            double bestWall = double.MaxValue, bestCpu = double.MaxValue;
            SmoothingSplineFit? fit = null;
            for (int k = 0; k < 2; k++)
            {
                var cpu = Process.GetCurrentProcess().TotalProcessorTime;
                var clock = Stopwatch.StartNew();
                fit = CubicSmoothingSpline.Fit(t, y);
                bestWall = Math.Min(bestWall, clock.Elapsed.TotalMilliseconds);
                bestCpu = Math.Min(bestCpu, (Process.GetCurrentProcess().TotalProcessorTime - cpu).TotalMilliseconds);
            }

            output.WriteLine($"n = {n}: GCV fit {bestWall:F0} ms wall, {bestCpu:F0} ms CPU (best of 2); tr A = {fit!.EffectiveDegreesOfFreedom:F1}");
            Assert.True(double.IsFinite(fit.Lambda));
        }
    }

    // t: random spacings in [0.5, 1.5]·Δ with one gap of 100 Δ in the middle, scaled to [0, 20π];
    // y = t + 0.5·sin t + uniform noise of half-width 1e-3.
    internal static (double[] T, double[] Y) Record(int n, int seed)
    {
        var rng = new Random(seed);
        var t = new double[n];
        for (int i = 1; i < n; i++)
        {
            t[i] = t[i - 1] + (i == n / 2 ? 100.0 : 0.5 + rng.NextDouble());
        }

        double scale = 20 * Math.PI / t[^1];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            t[i] *= scale;
            y[i] = t[i] + (0.5 * Math.Sin(t[i])) + (2e-3 * (rng.NextDouble() - 0.5));
        }

        return (t, y);
    }
}
