using System.Text.Json;
using NormalFormFit.Onset;

namespace NormalFormFit.Tests.Onset;

public class TrendFitTests
{
    private static JsonElement Reference()
    {
        var path = Path.Combine(AppContext.BaseDirectory, "Reference", "trend_reference.json");
        return JsonDocument.Parse(File.ReadAllText(path)).RootElement;
    }

    private static List<TrendPoint> Points(JsonElement r)
    {
        var mu = r.GetProperty("mu").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        var y = r.GetProperty("y").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        var se = r.GetProperty("se").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        return mu.Select((m, i) => new TrendPoint(m, y[i], se[i])).ToList();
    }

    [Fact]
    public void StraightLineRoot_AndFiellerInterval_MatchScipyCurveFitWithFiellerTheorem()
    {
        // Reference: Reference/make_trend_reference.py (NumPy 1.24.2 lstsq with the covariance convention of SciPy 1.10.1
        // curve_fit absolute_sigma=False, scipy.stats.t.ppf(0.975, 4), Fieller 1954 as the roots of a quadratic). Both sides are exact linear
        // algebra on six points: agreement to 1e-9 relative leaves room only for rounding.
        var r = Reference();
        var trend = TrendFit.Fit(Points(r), 1);
        var root = TrendFit.NearestRoot(trend, Points(r));
        var q = MathNet.Numerics.Distributions.StudentT.InvCDF(0, 1, trend.DegreesOfFreedom, 0.975);
        var ci = TrendFit.InvertTest(trend, root, q, 0.14);

        Assert.Equal(r.GetProperty("t975").GetDouble(), q, 1e-9);
        Assert.Equal(r.GetProperty("slope").GetDouble(), trend.Slope(1.0), 1e-9);
        Assert.Equal(r.GetProperty("root").GetDouble(), root, 1e-9);
        Assert.Equal(r.GetProperty("ci95_low").GetDouble(), ci.Low, 1e-9);
        Assert.Equal(r.GetProperty("ci95_high").GetDouble(), ci.High, 1e-9);
    }

    [Fact]
    public void Root_OfExactLine_IsExact_TheBottleneckIntervalKeepsTheStatedErrors_AndThePeriodIntervalShrinks()
    {
        // y = 2(μ − 0.3) without noise, errors 10⁻³: the root is 0.3 (exact algebra, common practice, no source).
        // χ² = 0: the period route scales its covariance by it (an interval of zero width); the bottleneck route never
        // scales down, so its interval is the one the stated errors give: half-width 1.96·σ·√(1/n + (μc − μ̄)²/Sxx)/|slope|
        // (the weighted straight line's variance at μc; Fieller's interval equals it to first order in g = t²·Var(slope)/slope²,
        // here 10⁻⁵; common practice, no source).
        var mus = new[] { 0.31, 0.35, 0.4, 0.5, 0.6 };
        var pts = mus.Select(m => new TrendPoint(m, 2 * (m - 0.3), 1e-3)).ToList();
        var bottleneck = TrendFit.Root(OnsetRoute.Bottleneck, pts, allowCurvature: false);
        var period = TrendFit.Root(OnsetRoute.Period, pts, allowCurvature: false);

        Assert.Equal(0.3, bottleneck.Value, 12);
        Assert.Equal(0.3, period.Value, 12);
        Assert.True(period.Ci95.Width < 1e-9);
        var mean = mus.Average();
        var sxx = mus.Sum(m => (m - mean) * (m - mean));
        var half = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.975) * 1e-3 * Math.Sqrt((1.0 / mus.Length) + ((0.3 - mean) * (0.3 - mean) / sxx)) / 2;
        Assert.Equal(2 * half, bottleneck.Ci95.Width, 2 * half * 1e-3);
    }

    [Fact]
    public void BottleneckRoot_WhenRunsScatterLessThanTheirErrors_MatchesScipyCurveFitWithAbsoluteSigma()
    {
        // Reference: Reference/make_trend_reference.py, "stated_errors" (the reference runs with errors three times
        // larger, χ²/ν = 0.041; SciPy 1.10.1 curve_fit(line, mu, y, sigma=se, absolute_sigma=True) for the covariance,
        // scipy.stats.norm.ppf(0.975): the error scale is not estimated, Fieller 1954). The bottleneck route keeps the
        // stated errors instead of scaling its covariance down by χ²/ν; the period route (its per-run errors
        // conservative by construction) still does.
        var r = Reference();
        var stated = r.GetProperty("stated_errors");
        var se = stated.GetProperty("se").EnumerateArray().Select(e => e.GetDouble()).ToArray();
        var pts = Points(r).Select((p, i) => p with { StandardError = se[i] }).ToList();
        var trend = TrendFit.Fit(pts, 1, scaleDown: TrendFit.ScalesDown(OnsetRoute.Bottleneck));
        var root = TrendFit.NearestRoot(trend, pts);
        var estimate = TrendFit.Root(OnsetRoute.Bottleneck, pts, allowCurvature: false);
        var q = MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.975);
        var ci = TrendFit.InvertTest(trend, root, q, 0.14);

        Assert.False(trend.Scaled);
        Assert.Equal(stated.GetProperty("z975").GetDouble(), q, 1e-12);
        Assert.Equal(stated.GetProperty("reduced_chi2").GetDouble(), trend.ReducedChiSquare, 1e-9);
        Assert.Equal(stated.GetProperty("root").GetDouble(), root, 1e-9);
        Assert.Equal(stated.GetProperty("ci95_low").GetDouble(), ci.Low, 1e-9);
        Assert.Equal(stated.GetProperty("ci95_high").GetDouble(), ci.High, 1e-9);
        Assert.Equal(1.0, trend.CovarianceScale);

        // The route itself smooths the errors across μ first (a quadratic in μ fitted to log σᵢ), which moves them by a
        // few percent here: its interval is the same to within 2% of the width (measured 0.4%), and unscaled as well.
        Assert.False(estimate.Trend!.Scaled);
        Assert.Equal(ci.Low, estimate.Ci95.Low, 0.02 * ci.Width);
        Assert.Equal(ci.High, estimate.Ci95.High, 0.02 * ci.Width);
        Assert.False(TrendFit.ScalesDown(OnsetRoute.Bottleneck));
        Assert.True(TrendFit.ScalesDown(OnsetRoute.Period));
    }

    [Fact]
    public void Root_WhenSlopeIsNotSignificant_GivesUnboundedIntervalAndSaysSo()
    {
        // A flat trend with scatter: Fieller's interval is then the whole line or two half-lines (Fieller 1954).
        var pts = new[] { (1.0, 0.5), (1.1, 0.3), (1.2, 0.6), (1.3, 0.35), (1.4, 0.55) }
            .Select(p => new TrendPoint(p.Item1, p.Item2, 0.1)).ToList();
        var e = TrendFit.Root(OnsetRoute.Bottleneck, pts, allowCurvature: false);
        Assert.True(double.IsInfinity(e.Ci95.Low) || double.IsInfinity(e.Ci95.High) || !e.IsAvailable);
        Assert.Contains(e.Diagnostics, d => d.Code is "unbounded-interval" or "no-root");
    }

    [Fact]
    public void Root_WithFewerThanThreeRuns_IsNotAvailableWithAReason()
    {
        var e = TrendFit.Root(OnsetRoute.Period, [new TrendPoint(1, 1, 0.1), new TrendPoint(2, 2, 0.1)]);
        Assert.False(e.IsAvailable);
        Assert.Equal("too-few-runs", Assert.Single(e.Diagnostics).Code);
    }

    [Fact]
    public void Root_OfCurvedTrend_ChoosesCurvatureAndFindsTheRotorOnset()
    {
        // T⁻² of the rotor is (μ² − 1)/4π² (Adler 1946): curved in μ, root at μ = 1.
        var mus = new[] { 1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3 };
        var pts = mus.Select((m, i) => new TrendPoint(m, ((m * m) - 1) / (4 * Math.PI * Math.PI) * (1 + (1e-4 * ((i % 3) - 1))), 1e-5)).ToList();
        var e = TrendFit.Root(OnsetRoute.Period, pts);
        Assert.Equal(2, e.Trend!.Degree);
        Assert.Equal(1.0, e.Value, 3);
        Assert.True(e.Ci95.Contains(1.0));
    }
}
