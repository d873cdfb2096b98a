using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Numerics;

namespace NormalFormFit.Onset;

/// <summary>One observation of a trend: parameter, value, standard error.</summary>
/// <param name="Mu">Control parameter.</param>
/// <param name="Y">Observed value (a, or T⁻²).</param>
/// <param name="StandardError">Its standard error.</param>
public readonly record struct TrendPoint(double Mu, double Y, double StandardError);

/// <summary>
/// Weighted polynomial trends and their roots with test-inversion intervals.
/// </summary>
/// <remarks>
/// Fit: weighted least squares y = Σ cₖ(μ−μ₀)ᵏ with weights 1/σᵢ² (QR, MathNet). The covariance is scaled by the
/// reduced χ² (Birge ratio) so that a common misstatement of the per-run errors does not spoil the interval,
/// and quantiles are Student-t with n − p degrees of freedom. The bottleneck route scales only up
/// (<see cref="ScalesDown"/>); when it does not scale, the errors are as stated and the quantile is the normal 1.96. Root: the zero of the trend nearest the data.
/// Interval: all μ where |y(μ)| ≤ t·sd(y(μ)), the connected part holding the root — Fieller's theorem
/// (Fieller 1954) for a straight line, its test-inversion generalisation for a quadratic. Degree 1 or 2 by
/// AICc (Hurvich &amp; Tsai 1989) with the variance estimated. Minimum: three points.
/// </remarks>
public static class TrendFit
{
    /// <summary>
    /// Whether a route's trend scales its covariance down when the runs scatter less than their errors say (χ²/ν &lt; 1).
    /// The period route does: a run's period error, SD(single periods)/√revolutions, overstates the error of the mean
    /// period under timing jitter by up to √revolutions (the mean is the span of the passages over the revolutions, so
    /// the jitter enters twice, not once per revolution), and the Birge ratio below 1 measures that overstatement. The
    /// bottleneck route does not: its per-run errors of a come from the local fit of each run and are not conservative
    /// by construction, so a χ²/ν below 1 is chance (with four degrees of freedom, one fit in twenty has χ²/ν below
    /// 0.18), and scaling down by it shrank the interval exactly when the runs happened to line up: on the bundled
    /// tracker demo χ² = 0.67 on 4 degrees of freedom made the standard error 0.41 of the unscaled one, and the interval
    /// missed the onset (the Particle Data Group's scale factor S = max(1, √(χ²/ν)) is the same rule; from memory).
    /// </summary>
    /// <param name="route">The route.</param>
    public static bool ScalesDown(OnsetRoute route) => route == OnsetRoute.Period;

    /// <summary>Fits a polynomial trend of the given degree. Needs at least degree + 1 points.</summary>
    /// <param name="points">The points.</param>
    /// <param name="degree">1 or 2.</param>
    /// <param name="scaleDown">Whether the covariance is scaled by a reduced χ² below 1 too (else only by one above 1; unscaled,
    /// the trend is not <see cref="OnsetCurve.Scaled"/> and its intervals use the normal quantile).</param>
    public static Trend Fit(IReadOnlyList<TrendPoint> points, int degree, bool scaleDown = true)
    {
        ArgumentNullException.ThrowIfNull(points);
        var n = points.Count;
        var p = degree + 1;
        if (n < p)
        {
            throw new ArgumentException($"need at least {p} points for degree {degree}", nameof(points));
        }

        var origin = points.Average(q => q.Mu);
        var x = Matrix<double>.Build.Dense(n, p);
        var y = Vector<double>.Build.Dense(n);
        for (var i = 0; i < n; i++)
        {
            var sw = 1.0 / points[i].StandardError;
            var d = points[i].Mu - origin;
            var g = 1.0;
            for (var k = 0; k < p; k++)
            {
                x[i, k] = g * sw;
                g *= d;
            }

            y[i] = points[i].Y * sw;
        }

        var qr = x.QR();
        var c = qr.Solve(y);
        var chi2 = (y - (x * c)).DotProduct(y - (x * c));
        var dof = n - p;
        var rInv = qr.R.Inverse();
        var cov = rInv * rInv.Transpose();
        var red = dof > 0 ? chi2 / dof : double.NaN;
        var scaled = dof > 0 && (scaleDown || red > 1);
        if (scaled)
        {
            cov *= red;
        }

        return new Trend(c.ToArray(), cov.ToArray(), origin, red, dof, scaled);
    }

    /// <summary>AICc of a weighted fit with the variance scale estimated (k = p + 1 parameters).</summary>
    public static double Aicc(Trend trend, int n)
    {
        ArgumentNullException.ThrowIfNull(trend);
        return InformationCriteria.Aicc(trend.ReducedChiSquare * trend.DegreesOfFreedom, n, trend.Coefficients.Length + 1);
    }

    /// <summary>
    /// Estimates the root μc of the trend through <paramref name="points"/>; degree 1, or 2 when AICc prefers
    /// it (only with five points or more, so that two degrees of freedom remain).
    /// </summary>
    /// <param name="route">The route, named in messages.</param>
    /// <param name="points">The runs' points; their standard errors are smoothed across μ.</param>
    /// <param name="allowCurvature">Whether a quadratic trend may be chosen.</param>
    /// <param name="belowOnset">Points from runs below onset (relaxation rates), added after the smoothing with their own
    /// errors; counted in <see cref="OnsetEstimate.RunsBelowOnset"/>.</param>
    public static OnsetEstimate Root(OnsetRoute route, IReadOnlyList<TrendPoint> points, bool allowCurvature = true, IReadOnlyList<TrendPoint>? belowOnset = null)
    {
        ArgumentNullException.ThrowIfNull(points);
        var diags = new List<Diagnostic>();
        if (points.Count < 3)
        {
            return OnsetEstimate.NotAvailable(route, points.Count, new Diagnostic(Severity.Warning, "too-few-runs",
                $"the {route.Noun()} route needs at least three usable runs, found {points.Count}"));
        }

        var below = belowOnset?.Count ?? 0;
        points = belowOnset is { Count: > 0 } extra ? [.. SmoothErrors(points), .. extra] : SmoothErrors(points);
        var n = points.Count;
        var down = ScalesDown(route);
        var trend = Fit(points, 1, down);
        if (allowCurvature && n >= 5)
        {
            var quad = Fit(points, 2, down);
            if (Aicc(quad, n) < Aicc(trend, n))
            {
                trend = quad;
                diags.Add(new Diagnostic(Severity.Info, "curved-trend",
                    $"the {route.Noun()} route uses a trend with a curvature term (preferred by AICc over a straight line)"));
            }
        }

        return FromTrend(route, trend, points, diags, below);
    }

    /// <summary>
    /// The root of the trend of exactly <paramref name="degree"/> through <paramref name="points"/> (errors smoothed as in
    /// <see cref="Root"/>); a candidate for model averaging. Not available with fewer than degree + 3 points.
    /// </summary>
    internal static OnsetEstimate RootOfDegree(OnsetRoute route, IReadOnlyList<TrendPoint> points, int degree)
    {
        var least = degree == 1 ? 3 : degree + 3;
        if (points.Count < least)
        {
            return OnsetEstimate.NotAvailable(route, points.Count, new Diagnostic(Severity.Warning, "too-few-runs",
                $"the {route.Noun()} route needs at least {least} usable runs for this trend, found {points.Count}"));
        }

        var smoothed = SmoothErrors(points);
        return FromTrend(route, Fit(smoothed, degree, ScalesDown(route)), smoothed, [], 0);
    }

    private static OnsetEstimate FromTrend(OnsetRoute route, Trend trend, IReadOnlyList<TrendPoint> points, List<Diagnostic> diags, int below)
    {
        var n = points.Count;
        var root = NearestRoot(trend, points);
        if (double.IsNaN(root))
        {
            diags.Add(new Diagnostic(Severity.Warning, "no-root",
                $"the {route.Noun()} trend does not reach zero near the data; the runs may be far from onset or the trend flat"));
            return new OnsetEstimate(route, double.NaN, double.NaN, new Interval(double.NaN, double.NaN), n, trend, diags) { RunsBelowOnset = below };
        }

        var slope = trend.Slope(root);
        var se = Math.Sqrt(trend.Variance(root)) / Math.Abs(slope);
        var q = trend.Scaled ? StudentT.InvCDF(0, 1, trend.DegreesOfFreedom, 0.975) : Normal.InvCDF(0, 1, 0.975);
        if (trend.DegreesOfFreedom == 0)
        {
            diags.Add(new Diagnostic(Severity.Warning, "no-residual-dof",
                $"the {route.Noun()} trend has no residual degrees of freedom; its interval rests on the per-run errors alone"));
        }

        var span = points.Max(r => r.Mu) - points.Min(r => r.Mu);
        var ci = InvertTest(trend, root, q, Math.Max(span, Math.Abs(root) * 1e-6 + 1e-12));
        if (double.IsInfinity(ci.Low) || double.IsInfinity(ci.High))
        {
            diags.Add(new Diagnostic(Severity.Warning, "unbounded-interval",
                $"the data cannot bound the onset on one side by the {route.Noun()} route (the trend is not significantly sloped); measure closer to onset"));
        }

        return new OnsetEstimate(route, root, se, ci, n, trend, diags) { RunsBelowOnset = below };
    }

    /// <summary>
    /// Replaces each run's standard error by a smooth function of μ (least squares of log σᵢ on a polynomial in μ,
    /// degree ≤ 2). Each σᵢ comes from a handful of revolutions and scatters by tens of percent; weighting by the raw
    /// values lets a few runs with luckily small σᵢ dominate, which the common Birge scale cannot repair and which
    /// makes intervals too narrow. The smooth keeps the systematic trend of σ with μ (common practice, no source).
    /// </summary>
    internal static IReadOnlyList<TrendPoint> SmoothErrors(IReadOnlyList<TrendPoint> points)
    {
        var n = points.Count;
        var degree = Math.Min(2, n - 3);
        if (degree < 1)
        {
            return points;
        }

        var logs = points.Select(p => new TrendPoint(p.Mu, Math.Log(p.StandardError), 1.0)).ToList();
        var fit = Fit(logs, degree);
        return points.Select(p => p with { StandardError = Math.Exp(fit.Evaluate(p.Mu)) }).ToList();
    }

    /// <summary>The zero of the trend nearest the point with the smallest |y|.</summary>
    internal static double NearestRoot(Trend trend, IReadOnlyList<TrendPoint> points)
    {
        var anchor = points.MinBy(p => Math.Abs(p.Y)).Mu;
        var c = trend.Coefficients;
        var x0 = trend.Origin;
        if (trend.Degree == 1)
        {
            return c[1] == 0 ? double.NaN : x0 - (c[0] / c[1]);
        }

        var disc = (c[1] * c[1]) - (4 * c[2] * c[0]);
        if (disc < 0 || c[2] == 0)
        {
            return c[1] == 0 ? double.NaN : x0 - (c[0] / c[1]);
        }

        // Numerically stable quadratic roots (Press et al., Numerical Recipes 3rd ed., §5.6).
        var qv = -0.5 * (c[1] + (Math.Sign(c[1] == 0 ? 1 : c[1]) * Math.Sqrt(disc)));
        var r1 = x0 + (qv / c[2]);
        var r2 = qv != 0 ? x0 + (c[0] / qv) : r1;
        return Math.Abs(r1 - anchor) <= Math.Abs(r2 - anchor) ? r1 : r2;
    }

    /// <summary>Connected set around <paramref name="root"/> where y(μ)² ≤ q²·Var y(μ).</summary>
    internal static Interval InvertTest(Trend trend, double root, double q, double span)
    {
        double G(double mu)
        {
            var y = trend.Evaluate(mu);
            return (y * y) - (q * q * trend.Variance(mu));
        }

        // Probes at offsets growing by 1.25 from 10⁻³ of the span up to 100 spans; no crossing: unbounded that side.
        var stop = new BisectionStop(1e-13 * (1 + Math.Abs(root)), 0.0, 100);
        double Edge(int direction)
        {
            var probes = RootFinding.GeometricOffsets(root, direction, span * 1e-3, 1.25, 100 * span);
            var edge = RootFinding.FirstCrossing(G, root, probes, stop);
            return double.IsNaN(edge) ? direction * double.PositiveInfinity : edge;
        }

        return new Interval(Edge(-1), Edge(+1));
    }

    /// <summary>z = (μ₁ − μ₂)/√(σ₁² + σ₂²) and |z| ≤ 2.</summary>
    public static OnsetAgreement Agreement(OnsetEstimate first, OnsetEstimate second, string? reasonIfNot)
    {
        ArgumentNullException.ThrowIfNull(first);
        ArgumentNullException.ThrowIfNull(second);
        if (!first.IsAvailable || !second.IsAvailable)
        {
            return new OnsetAgreement(double.NaN, false, "one of the routes gave no estimate");
        }

        var z = (first.Value - second.Value) / Math.Sqrt((first.StandardError * first.StandardError) + (second.StandardError * second.StandardError));
        var ok = Math.Abs(z) <= 2;
        return new OnsetAgreement(z, ok, ok ? null : reasonIfNot);
    }
}
