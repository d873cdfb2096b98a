using System.Text.Json;
using NormalFormFit.Onset;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Onset;

public class SquareRootLawFitTests(ITestOutputHelper output)
{
    private static JsonElement Reference()
    {
        var path = Path.Combine(AppContext.BaseDirectory, "Reference", "period_law_reference.json");
        return JsonDocument.Parse(File.ReadAllText(path)).RootElement;
    }

    private static double[] Array(JsonElement e, string name) => [.. e.GetProperty(name).EnumerateArray().Select(x => x.GetDouble())];

    [Theory]
    [InlineData("two", 2)]
    [InlineData("three", 3)]
    public void Fit_MatchesScipyLeastSquaresAndProfileInterval(string key, int coefficients)
    {
        // Reference: Reference/make_period_law_reference.py — SciPy 1.10.1 scipy.optimize.least_squares (method="trf",
        // tolerances 1e-15) on (α, β[, γ], μc) together, checked there against scipy.optimize.curve_fit(absolute_sigma=False);
        // se(μc) from inv(JᵀJ)·χ²/(n − p); interval edges by scipy.optimize.brentq on the profile χ²(μc) from numpy lstsq
        // against χ²min + t²χ²min/(n − p), t = scipy.stats.t.ppf(0.975, n − p). Our side profiles μc by grid + Brent and
        // solves the coefficients by QR; 1e-7 relative leaves room for the two optimisers' stopping rules only.
        var r = Reference();
        var mu = Array(r, "mu");
        var period = Array(r, "period");
        var se = Array(r, "se");
        var pts = mu.Select((m, i) => new PeriodSample(m, period[i], se[i])).ToList();
        var fit = SquareRootLawFit.Fit(pts, side: +1, coefficients);
        var e = r.GetProperty(key);

        Assert.NotNull(fit);
        var law = fit.Law;
        output.WriteLine($"μc {law.Onset:R} [{fit.Ci95.Low:R}, {fit.Ci95.High:R}] χ² {fit.ChiSquare:R} AICc {fit.Aicc:R}");
        Assert.Equal(e.GetProperty("onset").GetDouble(), law.Onset, 1e-8);
        var c = Array(e, "coefficients");
        for (var k = 0; k < coefficients; k++)
        {
            Assert.Equal(c[k], law.Coefficients[k], 1e-6 * Math.Max(1, Math.Abs(c[k])));
        }

        Assert.Equal(e.GetProperty("chi2").GetDouble(), fit.ChiSquare, 1e-7 * fit.ChiSquare);
        Assert.Equal(e.GetProperty("aicc").GetDouble(), fit.Aicc, 1e-7);
        Assert.Equal(e.GetProperty("onset_se").GetDouble(), Math.Sqrt(law.Covariance[coefficients, coefficients]), 1e-5 * e.GetProperty("onset_se").GetDouble());
        Assert.Equal(e.GetProperty("ci95_low").GetDouble(), fit.Ci95.Low, 1e-8);
        Assert.Equal(e.GetProperty("ci95_high").GetDouble(), fit.Ci95.High, 1e-8);
    }

    [Fact]
    public void Curve_OnThePeriodScale_IsInverseSquaredPeriodWithTheLimitSlopeAtOnset()
    {
        // y = T⁻² = d/(α + β√d)²: 0 at μc, slope 1/α² there, undefined on the resting side (exact algebra).
        var law = new SquareRootPeriodLaw([2.0, 3.0], 1.0, +1, new double[3, 3], 1, 5, true);
        Assert.Equal(0.0, law.Evaluate(1.0));
        Assert.Equal(0.25, law.Slope(1.0), 12);
        Assert.Equal(0.25, law.Slope(0.5), 12);
        Assert.True(double.IsNaN(law.Evaluate(0.9)));
        Assert.Equal(1 / Math.Pow((2 / Math.Sqrt(0.21)) + 3, 2), law.Evaluate(1.21), 12);
        Assert.Equal((2 / Math.Sqrt(0.21)) + 3, law.PeriodAt(1.21), 12);
        var h = 1e-6;
        Assert.Equal((law.Evaluate(1.3 + h) - law.Evaluate(1.3 - h)) / (2 * h), law.Slope(1.3), 8);

        // Mirror image: runs turning below μc.
        var below = law with { Side = -1 };
        Assert.Equal(law.Evaluate(1.21), below.Evaluate(0.79), 12);
        Assert.Equal(-law.Slope(1.21), below.Slope(0.79), 12);
    }

    /// <summary>
    /// Seeded Monte-Carlo calibration of the law's 95% interval on synthetic periods T = α d^−½ + β + σε, ε Gaussian (no
    /// simulation needed), onset above and below the runs. R = 1000 repeats: a calibrated interval covers in
    /// [931, 967] repeats with probability 0.99 (scipy.stats.binom.ppf(0.005 and 0.995, 1000, 0.95) in
    /// Reference/make_period_law_reference.py).
    /// </summary>
    [Theory]
    [InlineData(+1)]
    [InlineData(-1)]
    public void Interval_OverSeededRepeats_CoversTheTrueOnsetWithinTheBinomialBand(int side)
    {
        var cal = Reference().GetProperty("calibration");
        var repeats = cal.GetProperty("repeats").GetInt32();
        const double alpha = 0.8, beta = 2.5, muc = 3.0;
        double[] distances = [0.01, 0.02, 0.04, 0.07, 0.1, 0.15, 0.2, 0.3];
        var covered = 0;
        var fitted = 0;
        var z = new List<double>();
        for (var r = 0; r < repeats; r++)
        {
            var noise = GaussianSource.Create(7000 + r, stream: side > 0 ? 1 : 2);
            var pts = distances.Select(d =>
            {
                var t = (alpha / Math.Sqrt(d)) + beta;
                var sigma = 0.002 * t; // 0.2% of the period: a handful of revolutions with some timing jitter (invented level)
                return new PeriodSample(muc + (side * d), t + (sigma * noise.Next()), sigma);
            }).ToList();
            var fit = SquareRootLawFit.Fit(pts, side, 2);
            if (fit is null)
            {
                continue;
            }

            fitted++;
            covered += fit.Ci95.Contains(muc) ? 1 : 0;
            z.Add((fit.Law.Onset - muc) / Math.Sqrt(fit.Law.Covariance[2, 2]));
        }

        var mean = z.Average();
        output.WriteLine($"side {side}: coverage {covered}/{repeats}, fitted {fitted}; mean z {mean:F2}, sd z {Math.Sqrt(z.Sum(x => (x - mean) * (x - mean)) / (z.Count - 1)):F2}");
        Assert.Equal(repeats, fitted);
        Assert.InRange(covered, cal.GetProperty("low").GetInt32(), cal.GetProperty("high").GetInt32());
        output.WriteLine(CalibrationChecks.AssertBalancedAndNotTooWide(z));
    }

    [Fact]
    public void PeriodRoute_PrefersTheLawWhenThePeriodsCarryAnOffset_AndThePolynomialWhenTheyDoNot()
    {
        // Periods with a large constant excursion time β: T⁻² bends like √d, the law wins by AICc and its interval covers.
        double[] distances = [0.01, 0.02, 0.04, 0.07, 0.1, 0.15, 0.2, 0.3];
        var withOffset = distances.Select((d, i) => ToPoint(1.0 + d, ((0.5 / Math.Sqrt(d)) + 4.0) * (1 + (1e-4 * ((i % 3) - 1))), 1e-4)).ToList();
        var e = PeriodRoute.Estimate(withOffset);
        Assert.Equal(OnsetLaw.SquareRootWithOffset, e.Curve!.Law);
        Assert.Null(e.Trend);
        Assert.Contains(e.Diagnostics, d => d.Code == "period-law-offset");
        Assert.True(e.Ci95.Contains(1.0));
        Assert.Equal(1.0, e.Value, 4);

        // The rotor's T⁻² = (μ² − 1)/4π² (Adler 1946) is a quadratic in μ: the polynomial stays.
        var rotor = distances.Select((d, i) => ToPoint(1.0 + d, 2 * Math.PI / Math.Sqrt(((1 + d) * (1 + d)) - 1) * (1 + (1e-4 * ((i % 3) - 1))), 1e-4)).ToList();
        var p = PeriodRoute.Estimate(rotor);
        Assert.Equal(OnsetLaw.Polynomial, p.Curve!.Law);
        Assert.Equal(2, p.Trend!.Degree);
    }

    private static TrendPoint ToPoint(double mu, double period, double relativeError) =>
        new(mu, 1 / (period * period), 2 * relativeError / (period * period));
}
