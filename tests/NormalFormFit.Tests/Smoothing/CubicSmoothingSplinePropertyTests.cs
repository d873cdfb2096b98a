using NormalFormFit.Smoothing;

namespace NormalFormFit.Tests.Smoothing;

/// <summary>Properties of the penalised least-squares spline (Green &amp; Silverman 1994, ch. 2).</summary>
public class CubicSmoothingSplinePropertyTests
{
    [Theory]
    [InlineData(0.0)]
    [InlineData(1e-4)]
    [InlineData(1.0)]
    [InlineData(1e4)]
    [InlineData(null)]
    public void Fit_OfStraightLine_ReproducesItExactly(double? lambda)
    {
        // ∫f''² = 0 and zero residuals: the line is the unique minimiser for every λ (G&S §2.3). Qᵀy is a
        // sum of differences of the line, zero up to rounding, so 1e-12 of the data scale.
        var (t, _) = NonUniform(200, seed: 3);
        var y = t.Select(x => 4.0 - (2.5 * x)).ToArray();
        var w = t.Select((_, i) => 0.5 + (i % 3)).ToArray();

        var fit = CubicSmoothingSpline.Fit(t, y, new SmoothingOptions { Lambda = lambda }, w);

        for (int i = 0; i < t.Length; i++)
        {
            Assert.Equal(y[i], fit.Values[i], 1e-12 * 100);
            Assert.Equal(-2.5, fit.FirstDerivatives[i], 1e-10);
            Assert.Equal(0.0, fit.SecondDerivatives[i], 1e-9);
        }

        Assert.Equal(1.75, fit.Evaluate(0.9), 1e-12 * 100);
        Assert.Equal(4.0 - (2.5 * (t[^1] + 3.0)), fit.Evaluate(t[^1] + 3.0), 1e-12 * 100); // linear beyond the end
    }

    [Fact]
    public void Fit_WithTimesShiftedByConstant_IsUnchanged()
    {
        // Only differences of t enter. Adding 1000 to t ≈ 10 perturbs spacings of ≈ 0.05 by rounding of
        // 1000·2⁻⁵² ≈ 2e-13, i.e. 4e-12 relative; the fit moves by that times the condition number
        // (< 1e3 here): 1e-8 of the data scale is a safe bound.
        var (t, y) = NonUniform(200, seed: 5);
        var shifted = t.Select(x => x + 1000.0).ToArray();
        var options = new SmoothingOptions { Lambda = 0.02 };

        var a = CubicSmoothingSpline.Fit(t, y, options);
        var b = CubicSmoothingSpline.Fit(shifted, y, options);

        Assert.Equal(a.EffectiveDegreesOfFreedom, b.EffectiveDegreesOfFreedom, 1e-8);
        for (int i = 0; i < t.Length; i++)
        {
            Assert.Equal(a.Values[i], b.Values[i], 1e-8);
            Assert.Equal(a.FirstDerivatives[i], b.FirstDerivatives[i], 1e-7);
        }

        Assert.Equal(a.Evaluate(t[17] + 0.01), b.Evaluate(shifted[17] + 0.01), 1e-8);
    }

    [Fact]
    public void Fit_WithConstantAddedToY_ShiftsValuesByThatConstant()
    {
        // Qᵀ annihilates constants, so γ and the residuals are unchanged. y + 1e4 is rounded to
        // 1e4·2⁻⁵² ≈ 2e-12, so values agree to 1e-10 and GCV picks the same λ up to that rounding.
        var (t, y) = NonUniform(300, seed: 7);
        var lifted = y.Select(v => v + 1e4).ToArray();

        var a = CubicSmoothingSpline.Fit(t, y);
        var b = CubicSmoothingSpline.Fit(t, lifted);

        Assert.Equal(a.Lambda, b.Lambda, a.Lambda * 1e-6);
        for (int i = 0; i < t.Length; i++)
        {
            Assert.Equal(a.Values[i] + 1e4, b.Values[i], 1e-8);
            Assert.Equal(a.FirstDerivatives[i], b.FirstDerivatives[i], 1e-6);
        }
    }

    [Fact]
    public void Derivative_OfWellSampledSineWithTinyNoise_IsWithinBound()
    {
        // sin on [0, 4π] (f'' = 0 at both ends, so the natural end conditions add no bias), 2000 samples,
        // uniform noise of half-width 1e-4 (σ = 5.8e-5). A central difference over 10 samples (Δ ≈ 0.063)
        // has an r.m.s. derivative error of σ√2/0.063 ≈ 1.3e-3; the GCV spline averages over more samples
        // and must beat it in r.m.s., and stay below 4× it at worst (the extreme of 2000 near-Gaussian
        // errors is ≈ 3.5 standard deviations).
        var rng = new Random(11);
        int n = 2000;
        var t = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            t[i] = 4 * Math.PI * (i + (0.3 * (rng.NextDouble() - 0.5))) / (n - 1);
            y[i] = Math.Sin(t[i]) + (2e-4 * (rng.NextDouble() - 0.5));
        }

        t[0] = 0.0;
        var fit = CubicSmoothingSpline.Fit(t, y);

        double worst = 0.0, sumSquares = 0.0;
        for (int i = 0; i < n; i++)
        {
            double e = fit.FirstDerivatives[i] - Math.Cos(t[i]);
            worst = Math.Max(worst, Math.Abs(e));
            sumSquares += e * e;
        }

        double rms = Math.Sqrt(sumSquares / n);
        Assert.True(rms < 1.3e-3, $"r.m.s. |f' − cos| = {rms:E2}");
        Assert.True(worst < 5.2e-3, $"max |f' − cos| = {worst:E2}");
        Assert.Equal(Math.Cos(1.0), fit.Derivative(1.0), 5.2e-3);
    }

    [Fact]
    public void Fit_AtHugeLambda_ApproachesWeightedLeastSquaresLineAsOneOverLambda()
    {
        // As λ → ∞ the fit tends to the weighted least-squares line with a departure of order 1/λ
        // (G&S §2.3). The residual r = λW⁻¹Qγ then carries the whole signal and f = y − r cancels: if
        // rounding in that subtraction or in the ill-conditioned solve dominated, the departure would stop
        // shrinking. So check it falls by ≈ 100 (within a factor 2, leaving room for the next term in 1/λ²)
        // when λ grows 100×, here up to 10¹¹ in units of unit spacing.
        var (t, y) = NonUniform(200, seed: 13);
        var w = t.Select((_, i) => 1.0 + (0.5 * Math.Sin(i))).ToArray();
        var line = WeightedLine(t, y, w);
        double spacing = (t[^1] - t[0]) / (t.Length - 1);
        double cube = spacing * spacing * spacing * w.Average();

        double Departure(double scaledLambda)
        {
            var fit = CubicSmoothingSpline.Fit(t, y, new SmoothingOptions { Lambda = scaledLambda * cube }, w);
            return t.Select((x, i) => Math.Abs(fit.Values[i] - line(x))).Max();
        }

        double d9 = Departure(1e9), d11 = Departure(1e11);
        double ratio = d9 / d11;
        Assert.InRange(ratio, 50.0, 200.0);
        Assert.True(d11 < 1e-4, $"departure at 1e11: {d11:E2}");
    }

    [Fact]
    public void Fit_DoesNotChangeCallersArrays()
    {
        var (t, y) = NonUniform(50, seed: 17);
        var w = Enumerable.Repeat(2.0, 50).ToArray();
        var (t0, y0, w0) = ((double[])t.Clone(), (double[])y.Clone(), (double[])w.Clone());

        var fit = CubicSmoothingSpline.Fit(t, y, null, w);

        Assert.Equal(t0, t);
        Assert.Equal(y0, y);
        Assert.Equal(w0, w);
        Assert.Equal(t0, fit.Knots.ToArray());
    }

    [Fact]
    public void Fit_WithScaledWeights_GivesSameCurveAtScaledLambda()
    {
        // Σ c·wᵢrᵢ² + cλ∫f''² has the same minimiser: weights c·w at λ·c equal weights w at λ.
        var (t, y) = NonUniform(80, seed: 19);
        var w = t.Select((_, i) => 1.0 + (i % 4)).ToArray();
        var a = CubicSmoothingSpline.Fit(t, y, new SmoothingOptions { Lambda = 0.05 }, w);
        var b = CubicSmoothingSpline.Fit(t, y, new SmoothingOptions { Lambda = 0.05 * 7.0 }, w.Select(v => v * 7.0).ToArray());
        for (int i = 0; i < t.Length; i++)
        {
            Assert.Equal(a.Values[i], b.Values[i], 1e-12);
        }
    }

    public static TheoryData<double[], double[], double[]?, double?> InvalidInputs => new()
    {
        { [0, 1, 2], [0, 1], null, null },
        { [0, 1], [0, 1], null, null },
        { [0, 1, 2], [0, double.NaN, 1], null, null },
        { [0, double.PositiveInfinity, 2], [0, 1, 1], null, null },
        { [0, 1, 1], [0, 1, 2], null, null },
        { [0, 2, 1], [0, 1, 2], null, null },
        { [0, 1, 2], [0, 1, 2], [1, 0, 1], null },
        { [0, 1, 2], [0, 1, 2], [1, 1], null },
        { [0, 1, 2], [0, 1, 2], null, -1.0 },
        { [0, 1, 2], [0, 1, 2], null, double.NaN },
    };

    [Theory]
    [MemberData(nameof(InvalidInputs))]
    public void Fit_WithInvalidInput_ThrowsArgumentException(double[] t, double[] y, double[]? w, double? lambda)
    {
        Assert.ThrowsAny<ArgumentException>(() =>
            CubicSmoothingSpline.Fit(t, y, new SmoothingOptions { Lambda = lambda }, w));
    }

    internal static (double[] T, double[] Y) NonUniform(int n, int seed)
    {
        var rng = new Random(seed);
        var t = new double[n];
        var y = new double[n];
        double s = 0.0;
        for (int i = 0; i < n; i++)
        {
            s += 0.02 + (0.06 * rng.NextDouble());
            t[i] = s;
            y[i] = Math.Sin(2 * s) + (0.5 * s) + (0.05 * (rng.NextDouble() - 0.5));
        }

        return (t, y);
    }

    private static Func<double, double> WeightedLine(double[] t, double[] y, double[] w)
    {
        double sw = w.Sum(), mt = t.Zip(w, (a, b) => a * b).Sum() / sw, my = y.Zip(w, (a, b) => a * b).Sum() / sw;
        double sxy = 0.0, sxx = 0.0;
        for (int i = 0; i < t.Length; i++)
        {
            sxy += w[i] * (t[i] - mt) * (y[i] - my);
            sxx += w[i] * (t[i] - mt) * (t[i] - mt);
        }

        double slope = sxy / sxx;
        return x => my + (slope * (x - mt));
    }
}
