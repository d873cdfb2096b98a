using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Onset;

/// <summary>A suggested measurement: where to record more runs and the onset interval expected after them.</summary>
/// <param name="Route">The onset route whose interval the runs shrink most.</param>
/// <param name="Param">Control parameter μ of the new runs.</param>
/// <param name="Runs">Number of new runs at <paramref name="Param"/>.</param>
/// <param name="CurrentCi95">The route's 95% interval now, in the same approximation (μc ± t·sd/|slope|).</param>
/// <param name="ExpectedCi95">The interval expected after the new runs.</param>
/// <param name="ExpectedPeriod">Expected period of the motion at <paramref name="Param"/> from the period trend (NaN when unknown).</param>
public sealed record NextMeasurement(OnsetRoute Route, double Param, int Runs, Interval CurrentCi95, Interval ExpectedCi95, double ExpectedPeriod);

/// <summary>
/// Chooses the parameter value whose new runs shrink a route's onset interval most, from the fitted trend and its
/// error model. Design criterion: after adding m runs at μ with the error σ(μ) predicted by a log-linear fit of the
/// per-run errors, the covariance is (XᵀWX + m g gᵀ/σ²)⁻¹ times the factor the fit's covariance carries (g the gradient of the fitted
/// quantity: the polynomial basis, or for the square-root law the Jacobian row of T with σ carried to T); the
/// delta-method half-width t·sd(μc) of the onset (for a polynomial t·sd(y(μc))/|y′(μc)|) is minimised over μ (c-optimal design for the root; Atkinson, Donev &amp; Tobias,
/// Optimum Experimental Designs, 2007, §10). Candidates lie on the turning side between half the nearest run's distance
/// to μc (the error model is not extrapolated further) and the farthest run. O(candidates × p³).
/// </summary>
public static class MeasurementPlanner
{
    /// <summary>The best single parameter value for <paramref name="runs"/> new runs, or null when the route has no estimate.</summary>
    /// <param name="estimate">The route's onset estimate.</param>
    /// <param name="points">The runs' points the route fitted.</param>
    /// <param name="runs">New runs to place.</param>
    /// <param name="periodCurve">The period route's curve of T⁻², which gives the expected period of the new runs (none: NaN).</param>
    public static NextMeasurement? Suggest(OnsetEstimate estimate, IReadOnlyList<TrendPoint> points, int runs = 2, OnsetCurve? periodCurve = null)
    {
        ArgumentNullException.ThrowIfNull(estimate);
        ArgumentNullException.ThrowIfNull(points);
        if (!estimate.IsAvailable || estimate.Curve is not { } trend || points.Count < 3 || runs < 1)
        {
            return null;
        }

        // Information of the runs on the fit's own scale (y for a polynomial, T for the square-root law).
        var smoothed = TrendFit.SmoothErrors(points);
        var logs = points.Select(p => new TrendPoint(p.Mu, Math.Log(p.StandardError), 1.0)).ToList();
        var errorModel = TrendFit.Fit(logs, 1);
        var p = trend.ParameterCount;
        var m0 = Matrix<double>.Build.Dense(p, p);
        foreach (var q in smoothed)
        {
            var sigma = trend.FitError(q.Mu, q.StandardError);
            AddOuter(m0, Vector<double>.Build.DenseOfArray(trend.FitGradient(q.Mu)), 1.0 / (sigma * sigma));
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

        // Half-width t·sd(μc): sd² = hᵀ C h with h = dμc/dθ (for a polynomial −g(μc)/y′(μc), the delta method).
        var scale = trend.CovarianceScale;
        var h = Vector<double>.Build.DenseOfArray(trend.RootGradient(root));
        double HalfWidth(Matrix<double> info, int dof)
        {
            var cov = info.Inverse() * scale;
            var v = h.DotProduct(cov * h);
            var t = dof > 0 ? StudentT.InvCDF(0, 1, dof, 0.975) : Normal.InvCDF(0, 1, 0.975);
            return t * Math.Sqrt(Math.Max(v, 0));
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
            var sigma = trend.FitError(mu, Math.Exp(errorModel.Evaluate(mu)));
            var info = m0.Clone();
            AddOuter(info, Vector<double>.Build.DenseOfArray(trend.FitGradient(mu)), runs / (sigma * sigma));
            var half = HalfWidth(info, trend.DegreesOfFreedom + runs);
            if (half < bestHalf)
            {
                bestHalf = half;
                bestMu = mu;
            }
        }

        if (!double.IsFinite(bestHalf))
        {
            return null;
        }

        var y = periodCurve?.Evaluate(bestMu) ?? double.NaN;
        return new NextMeasurement(estimate.Route, bestMu, runs, new Interval(root - current, root + current), new Interval(root - bestHalf, root + bestHalf),
            y > 0 ? 1 / Math.Sqrt(y) : double.NaN);
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
