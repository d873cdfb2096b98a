using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Numerics;

namespace NormalFormFit.Onset;

/// <summary>One run's period for <see cref="SquareRootLawFit"/>: parameter, mean period, its standard error.</summary>
/// <param name="Mu">Control parameter.</param>
/// <param name="Period">Mean period T.</param>
/// <param name="StandardError">Standard error of T.</param>
public readonly record struct PeriodSample(double Mu, double Period, double StandardError);

/// <summary>A fitted square-root law with what the period route needs to weigh it against the polynomial trends.</summary>
/// <param name="Law">The fitted law.</param>
/// <param name="ChiSquare">Weighted residual sum of squares of the periods at the optimum.</param>
/// <param name="Aicc">AICc with the variance scale estimated (k = number of coefficients + 2).</param>
/// <param name="Ci95">95% interval of μc by inverting the profile-likelihood test.</param>
/// <param name="Points">The periods fitted.</param>
public sealed record SquareRootLawResult(SquareRootPeriodLaw Law, double ChiSquare, double Aicc, Interval Ci95, IReadOnlyList<PeriodSample> Points);

/// <summary>
/// Fits the period law of a saddle-node on the circle with a constant excursion time,
/// T = α(μ − μc)^−½ + β (optionally + γ(μ − μc)^½), and inverts its profile likelihood for μc.
/// </summary>
/// <remarks>
/// <para>Law: the passage through the bottleneck of θ̇ ≈ a + bx² takes π/√(ab) with a ∝ μ − μc (Strogatz, Nonlinear
/// Dynamics and Chaos, 2nd ed., 2015, §4.3, the square-root scaling law of the bottleneck), so T ∝ (μ − μc)^−½ near
/// onset; the rest of the orbit (the spike, the fast side of the circle) adds a time that tends to a constant β.
/// Away from the bottleneck T⁻² = d/(α + β√d)² then carries a √d correction that no low-degree polynomial in μ
/// follows, and with precise periods the polynomial route's interval misses the onset. The optional γd^½ is the next
/// term of the same expansion (a(μ) curving, b(μ) drifting), chosen by AICc like the scaling law's corrections.</para>
/// <para>Fit: given μc the law is linear in its coefficients: weighted least squares (QR, MathNet) of Tᵢ with weights
/// 1/σᵢ². μc is profiled: χ²(μc) minimised over the log distance of μc beyond the run nearest onset by a grid, then
/// Brent's method (<see cref="GridSearch"/>), from 10⁻⁶ of the span of the runs to 20 spans. A minimum on either end
/// of that range means the data do not place a singularity there: no estimate.</para>
/// <para>Interval: all μc whose profile χ² exceeds the minimum by at most t²·χ²min/(n − p), t the 97.5% Student-t
/// quantile with n − p degrees of freedom (p counts μc): the likelihood-ratio test with the variance scale estimated
/// (Birge ratio), i.e. the F(1, n − p) test. For a model linear in its parameters this is exactly the test inversion of
/// <see cref="TrendFit"/> (Fieller 1954 for a straight line), so both laws' intervals are of one kind. The connected
/// set around the estimate; it cannot pass the run nearest onset (that run turns), and it is unbounded on the far
/// side when the profile stays below the threshold up to 100 spans. Standard error: from the Jacobian of all
/// parameters, scaled by the reduced χ² (the convention of SciPy's curve_fit with absolute_sigma=False).</para>
/// </remarks>
public static class SquareRootLawFit
{
    private const int Grid = 120;

    /// <summary>
    /// Fits the law with <paramref name="coefficients"/> coefficients (2: α, β; 3: α, β, γ; 4: α, β, γ, δ) to periods on the
    /// turning side <paramref name="side"/> (+1: the runs turn above μc). Null when the profile has no interior
    /// minimum, α ≤ 0, or fewer than p + 1 runs.
    /// </summary>
    public static SquareRootLawResult? Fit(IReadOnlyList<PeriodSample> points, int side, int coefficients = 2)
    {
        ArgumentNullException.ThrowIfNull(points);
        var n = points.Count;
        var p = coefficients + 1;
        if (n <= p || side is not (1 or -1) || coefficients is < 2 or > 4)
        {
            return null;
        }

        var mus = points.Select(q => q.Mu).ToArray();
        var edge = side > 0 ? mus.Min() : mus.Max();
        var span = mus.Max() - mus.Min();
        if (!(span > 0))
        {
            return null;
        }

        double OnsetAt(double logDistance) => edge - (side * Math.Exp(logDistance));
        double Chi2(double logDistance) => Profile(points, side, OnsetAt(logDistance), coefficients, out _);

        var min = GridSearch.Minimize(Chi2, Math.Log(1e-6 * span), Math.Log(20 * span), Grid, 1e-10);
        if (min.GridIndex < 0 || min.OnEdge || !double.IsFinite(min.Value))
        {
            return null;
        }

        var muc = OnsetAt(min.X);
        var chi2 = Profile(points, side, muc, coefficients, out var coef);
        if (!(coef[0] > 0))
        {
            return null;
        }

        var dof = n - p;
        var red = chi2 / dof;
        // Covariance from the Jacobian of all parameters (α, β[, γ], μc), scaled by the reduced χ².
        var j = Matrix<double>.Build.Dense(n, p);
        for (var i = 0; i < n; i++)
        {
            var g = SquareRootPeriodLaw.Gradient(coef, muc, side, points[i].Mu);
            for (var k = 0; k < p; k++)
            {
                j[i, k] = g[k] / points[i].StandardError;
            }
        }

        var cov = j.TransposeThisAndMultiply(j).Inverse() * red;
        var law = new SquareRootPeriodLaw(coef, muc, side, cov.ToArray(), red, dof, Scaled: true);

        var aicc = InformationCriteria.Aicc(chi2, n, p + 1);

        var q = StudentT.InvCDF(0, 1, dof, 0.975);
        var threshold = chi2 + (q * q * red);
        double Excess(double logDistance) => Chi2(logDistance) - threshold;
        var nearLog = Edge(Excess, min.X, -1, Math.Log(1e-9 * span));
        var farLog = Edge(Excess, min.X, +1, Math.Log(Math.Exp(min.X) + (100 * span)));
        var near = double.IsFinite(nearLog) ? OnsetAt(nearLog) : edge;
        var far = double.IsFinite(farLog) ? OnsetAt(farLog) : -side * double.PositiveInfinity;
        var ci = side > 0 ? new Interval(far, near) : new Interval(near, far);
        return new SquareRootLawResult(law, chi2, aicc, ci, points);
    }

    /// <summary>
    /// Weighted least squares of T on d^((k−1)/2), k = 0 … m−1, for a given μc; returns χ² (+∞ when a run is not on
    /// the turning side).
    /// </summary>
    internal static double Profile(IReadOnlyList<PeriodSample> points, int side, double muc, int coefficients, out double[] coef) =>
        WeightedLinearFit.ChiSquare(points.Count, coefficients, (int i, double[] g, out double y, out double w) =>
        {
            var d = side * (points[i].Mu - muc);
            for (var k = 0; k < g.Length; k++)
            {
                g[k] = Math.Pow(d, 0.5 * (k - 1));
            }

            (y, w) = (points[i].Period, 1.0 / points[i].StandardError);
            return d > 0;
        }, out coef);

    /// <summary>
    /// The first zero of <paramref name="excess"/> (negative at <paramref name="start"/>) walking in
    /// <paramref name="direction"/> up to <paramref name="limit"/>, by steps growing from 10⁻³ by 1.5 then bisection;
    /// NaN when none.
    /// </summary>
    private static double Edge(Func<double, double> excess, double start, int direction, double limit) =>
        RootFinding.FirstCrossing(
            excess, start, RootFinding.GeometricSteps(start, direction, 1e-3, 1.5, limit), new BisectionStop(0.0, 1e-13, 200));
}
