using System.Globalization;
using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Simulation;
using NormalFormFit.Smoothing;
using NormalFormFit.Tests.Analysis;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Smoothing;

/// <summary>The penalised regression spline against an independent dense solve and against the exact smoothing spline.</summary>
public class PenalizedSplineTests(ITestOutputHelper output)
{
    private static readonly Lazy<(double[] T, double[] Y, JsonElement Ref)> Reference = new(() =>
    {
        var folder = Path.Combine(AppContext.BaseDirectory, "Reference");
        var rows = File.ReadLines(Path.Combine(folder, "pspline_data.csv")).Skip(1)
            .Select(l => l.Split(',').Select(x => double.Parse(x, CultureInfo.InvariantCulture)).ToArray()).ToArray();
        var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(folder, "pspline_reference.json"))).RootElement;
        return (rows.Select(r => r[0]).ToArray(), rows.Select(r => r[1]).ToArray(), json);
    });

    // The reference uses 50 knot intervals for its 400 samples: 8 samples per interval.
    private static readonly SmoothingOptions Basis = new() { Method = SmoothingMethod.Penalized, SamplesPerKnot = 8 };

    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(2)]
    public void FixedLambda_MatchesDenseSolveOfTheSameNormalEquations(int index)
    {
        // Source: Reference/make_pspline_reference.py (NumPy 1.24.2, SciPy 1.10.1 BSpline.design_matrix, dense
        // np.linalg.solve). Both solve the same well-conditioned 53×53 system (BᵀB has about 8 samples per basis
        // function); banded LDLᵀ and dense LU differ by rounding, ~1e-13 relative: 1e-9 bounds are far above it
        // and far below any modelling difference (a wrong knot or penalty changes values by > 1e-3).
        var (t, y, r) = Reference.Value;
        var c = r.GetProperty("fixed")[index];
        var every = r.GetProperty("every").GetInt32();
        var values = new double[t.Length];
        var slopes = new double[t.Length];

        var fit = PenalizedSpline.Fit(t, y, Basis with { Lambda = c.GetProperty("lambda").GetDouble() }, values, slopes);

        Assert.Equal(r.GetProperty("intervals").GetInt32() + 3, fit.Coefficients);
        Assert.Equal(c.GetProperty("trace").GetDouble(), fit.EffectiveDegreesOfFreedom, 1e-9 * t.Length);
        Assert.Equal(c.GetProperty("gcv").GetDouble(), fit.GcvScore, 1e-9 * c.GetProperty("gcv").GetDouble());
        var refValues = c.GetProperty("values").EnumerateArray().Select(v => v.GetDouble()).ToArray();
        var refSlopes = c.GetProperty("derivatives").EnumerateArray().Select(v => v.GetDouble()).ToArray();
        for (var k = 0; k < refValues.Length; k++)
        {
            Assert.Equal(refValues[k], values[k * every], 1e-9);
            Assert.Equal(refSlopes[k], slopes[k * every], 1e-8);
        }
    }

    [Fact]
    public void GcvChoice_MatchesBoundedSearchOnTheDenseSolve()
    {
        // Source: as above, λ minimising the same GCV score by scipy.optimize.minimize_scalar (bounded, xatol 1e-6
        // in log₁₀ λ). Our search stops at 1e-3 in log₁₀ λ (Brent); GCV is flat at its minimum, so a 0.5 % change
        // of λ moves f' by ≲ 1e-3 (kernel ≈ 0.5 time units, noise 0.1): bounds 2e-3 in log₁₀ λ and 2e-3 in f'.
        var (t, y, r) = Reference.Value;
        var g = r.GetProperty("gcv");
        var every = r.GetProperty("every").GetInt32();
        var values = new double[t.Length];
        var slopes = new double[t.Length];

        var fit = PenalizedSpline.Fit(t, y, Basis, values, slopes);

        Assert.Equal(53, fit.Coefficients);
        Assert.Equal(g.GetProperty("log10_lambda").GetDouble(), Math.Log10(fit.Lambda), 2e-3);
        Assert.Equal(g.GetProperty("trace").GetDouble(), fit.EffectiveDegreesOfFreedom, 0.01);
        var refSlopes = g.GetProperty("derivatives").EnumerateArray().Select(v => v.GetDouble()).ToArray();
        for (var k = 0; k < refSlopes.Length; k++)
        {
            Assert.Equal(refSlopes[k], slopes[k * every], 2e-3);
        }
    }

    [Fact]
    public void StraightLine_IsReproducedExactly_AtAnyLambda()
    {
        // A line is in the span of cubic B-splines and in the null space of the second-difference penalty
        // (Eilers & Marx 1996, §3): the fit must return it to rounding (values up to 40: 1e-10).
        var t = Enumerable.Range(0, 5000).Select(i => (i * 0.01) + (0.003 * Math.Sin(i))).ToArray();
        var y = t.Select(x => 3.0 - (0.8 * x)).ToArray();
        foreach (var lambda in new[] { 1e-6, 1.0, 1e6 })
        {
            var values = new double[t.Length];
            var slopes = new double[t.Length];
            PenalizedSpline.Fit(t, y, new SmoothingOptions { Lambda = lambda }, values, slopes);
            for (var i = 0; i < t.Length; i++)
            {
                Assert.Equal(y[i], values[i], 1e-10);
                Assert.Equal(-0.8, slopes[i], 1e-10);
            }
        }
    }

    [Fact]
    public void Fit_OfTimesNotStrictlyIncreasing_Throws()
    {
        var t = Enumerable.Range(0, 20).Select(i => (double)i).ToArray();
        t[10] = t[9];
        var y = new double[20];

        Assert.Throws<ArgumentException>(() => PenalizedSpline.Fit(t, y, null, new double[20], new double[20]));
    }

    [Fact]
    public void RotorRun_BottleneckFromPenalizedSpline_AgreesWithExactSmoothingSpline()
    {
        // One simulated rotor run θ̇ = μ − sin θ (invented demo scenario), 2.4·10⁵ samples: the same analysis with
        // each smoother. With ≥ 4 coefficients per degree of freedom GCV spends, the regression spline spans the
        // exact spline's fit to within a small fraction of the noise (Ruppert 2002), so a and b must agree to a
        // tenth of their own standard errors. Against the truth a = μ − 1 both carry the bottleneck fit's own window
        // bias (BottleneckLocator; measured 0.2 % here, identical for both smoothers): 1 % bound.
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.05, Revolutions = 24, SamplingInterval = 0.002, MeasurementNoise = 0.01, Seed = 41 });
        var exact = SimulatedSet.AnalyzeOne(sim, new RunOptions { Smoothing = new SmoothingOptions { Method = SmoothingMethod.Exact } });
        var penalized = SimulatedSet.AnalyzeOne(sim, new RunOptions { Smoothing = new SmoothingOptions { Method = SmoothingMethod.Penalized } });

        var e = exact.Bottleneck!;
        var p = penalized.Bottleneck!;
        output.WriteLine($"n = {sim.Time.Length}; exact a = {e.A}, b = {e.B}, edf {exact.Smoothing!.EffectiveDegreesOfFreedom:F0}; penalized a = {p.A}, b = {p.B}, edf {penalized.Smoothing!.EffectiveDegreesOfFreedom:F0}");
        Assert.Equal(e.A.Value, p.A.Value, 0.1 * e.A.StandardError);
        Assert.Equal(e.B.Value, p.B.Value, 0.1 * e.B.StandardError);
        Assert.Equal(e.Phase.Value, p.Phase.Value, 0.1 * e.Phase.StandardError);
        Assert.Equal(0.05, p.A.Value, 0.01 * 0.05);
        Assert.Equal(exact.Smoothing.NoiseSd, penalized.Smoothing.NoiseSd, 0.002 * exact.Smoothing.NoiseSd);
    }

    [Fact]
    public void LongDenseRecord_ChoosesASmoothFitBeyondTheExactSplinesReach()
    {
        // 10⁶ samples of y = sin t + N(0, 0.2²) on [0, 20π]: GCV wants a kernel many thousands of samples wide,
        // beyond the ≈ 2000 samples at which rounding stops the exact spline's search (CubicSmoothingSpline).
        // Truth f' = cos t. What a 2000-sample kernel can do at best: a central difference over 2000 samples
        // (Δ = 6.3e-5) has noise σ√2/(2000Δ) ≈ 2.2 in f'. The GCV-chosen fit must be a hundred times better than
        // that (r.m.s. below 0.02), which only a kernel of many thousands of samples achieves.
        const int n = 1_000_000;
        var rng = new Random(7);
        var t = new double[n];
        var y = new double[n];
        for (var i = 0; i < n; i++)
        {
            t[i] = 20 * Math.PI * i / (n - 1);
            y[i] = Math.Sin(t[i]) + (0.2 * Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble()));
        }

        var values = new double[n];
        var slopes = new double[n];
        var fit = PenalizedSpline.Fit(t, y, null, values, slopes);

        var rms = Math.Sqrt(Enumerable.Range(0, n).Average(i => Math.Pow(slopes[i] - Math.Cos(t[i]), 2)));
        output.WriteLine($"λ = {fit.Lambda:E3}, edf = {fit.EffectiveDegreesOfFreedom:F1}, coefficients {fit.Coefficients}, r.m.s. error of f' {rms:E2}");
        Assert.True(rms < 0.02, $"r.m.s. error of f' = {rms:E2}");
        // σ² = 0.04 estimated from 10⁶ residuals: sampling error √(2/n) ≈ 0.14 %; 1 % bound.
        Assert.Equal(0.04, fit.ResidualVariance, 0.01 * 0.04);
    }
}
