using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Onset;

/// <summary>A suggested measurement: where to record more runs and the onset interval expected after them.</summary>
/// <param name="Route">The onset route whose interval the runs shrink most ("bottleneck" or "period").</param>
/// <param name="Param">Control parameter μ of the new runs.</param>
/// <param name="Runs">Number of new runs at <paramref name="Param"/>.</param>
/// <param name="CurrentCi95">The route's 95% interval now, in the same approximation (μc ± t·sd/|slope|).</param>
/// <param name="ExpectedCi95">The interval expected after the new runs.</param>
public sealed record NextMeasurement(string Route, double Param, int Runs, Interval CurrentCi95, Interval ExpectedCi95)
{
    /// <summary>Expected period of the motion at <see cref="Param"/> from the period trend (NaN when unknown).</summary>
    public double ExpectedPeriod { get; init; } = double.NaN;
}

/// <summary>
/// Chooses the parameter value whose new runs shrink a route's onset interval most, from the fitted trend and its
/// error model. Design criterion: after adding m runs at μ with the error σ(μ) predicted by a log-linear fit of the
/// per-run errors, the covariance is (XᵀWX + m g gᵀ/σ²)⁻¹ times the current Birge scale; the delta-method half-width
/// t·sd(y(μc))/|y′(μc)| of the onset is minimised over μ (c-optimal design for the root; Atkinson, Donev &amp; Tobias,
/// Optimum Experimental Designs, 2007, §10). Candidates lie on the turning side between half the nearest run's distance
/// to μc (the error model is not extrapolated further) and the farthest run. O(candidates × p³).
/// </summary>
public static class MeasurementPlanner
{
    /// <summary>The best single parameter value for <paramref name="runs"/> new runs, or null when the route has no estimate.</summary>
    public static NextMeasurement? Suggest(OnsetEstimate estimate, IReadOnlyList<TrendPoint> points, int runs = 2)
    {
        ArgumentNullException.ThrowIfNull(estimate);
        ArgumentNullException.ThrowIfNull(points);
        if (!estimate.IsAvailable || estimate.Trend is not { } trend || points.Count < 3 || runs < 1)
        {
            return null;
        }

        var smoothed = TrendFit.SmoothErrors(points);
        var logs = points.Select(p => new TrendPoint(p.Mu, Math.Log(p.StandardError), 1.0)).ToList();
        var errorModel = TrendFit.Fit(logs, 1);
        var p = trend.Coefficients.Length;
        var m0 = Matrix<double>.Build.Dense(p, p);
        foreach (var q in smoothed)
        {
            AddOuter(m0, Basis(q.Mu - trend.Origin, p), 1.0 / (q.StandardError * q.StandardError));
        }

        var root = estimate.Value;
        var slope = trend.Slope(root);
        if (!(Math.Abs(slope) > 0))
        {
            return null;
        }

        var side = Math.Sign(slope);
        var distances = points.Select(q => side * (q.Mu - root)).Where(d => d > 0).ToList();
        if (distances.Count == 0)
        {
            return null;
        }

        var scale = trend.Scaled ? trend.ReducedChiSquare : 1.0;
        var gc = Basis(root - trend.Origin, p);
        double HalfWidth(Matrix<double> info, int dof)
        {
            var cov = info.Inverse() * scale;
            var v = gc.DotProduct(cov * gc);
            var t = dof > 0 ? StudentT.InvCDF(0, 1, dof, 0.975) : Normal.InvCDF(0, 1, 0.975);
            return t * Math.Sqrt(Math.Max(v, 0)) / Math.Abs(slope);
        }

        var current = HalfWidth(m0, trend.DegreesOfFreedom);
        var dLo = 0.5 * distances.Min();
        var dHi = distances.Max();
        const int candidates = 60;
        var bestMu = double.NaN;
        var bestHalf = double.PositiveInfinity;
        for (var k = 0; k < candidates; k++)
        {
            var d = dLo * Math.Pow(dHi / dLo, k / (candidates - 1.0));
            var mu = root + (side * d);
            var sigma = Math.Exp(errorModel.Evaluate(mu));
            var info = m0.Clone();
            AddOuter(info, Basis(mu - trend.Origin, p), runs / (sigma * sigma));
            var half = HalfWidth(info, trend.DegreesOfFreedom + runs);
            if (half < bestHalf)
            {
                bestHalf = half;
                bestMu = mu;
            }
        }

        return double.IsFinite(bestHalf)
            ? new NextMeasurement(estimate.Route, bestMu, runs, new Interval(root - current, root + current), new Interval(root - bestHalf, root + bestHalf))
            : null;
    }

    private static Vector<double> Basis(double x, int p)
    {
        var g = Vector<double>.Build.Dense(p);
        var v = 1.0;
        for (var k = 0; k < p; k++)
        {
            g[k] = v;
            v *= x;
        }

        return g;
    }

    private static void AddOuter(Matrix<double> m, Vector<double> g, double w)
    {
        for (var i = 0; i < g.Count; i++)
        {
            for (var j = 0; j < g.Count; j++)
            {
                m[i, j] += w * g[i] * g[j];
            }
        }
    }
}
