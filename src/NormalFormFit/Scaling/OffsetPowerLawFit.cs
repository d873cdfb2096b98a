using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Numerics;

namespace NormalFormFit.Scaling;

/// <summary>One fit of the power law with an offset: μc, β and the linear coefficients [C, T₀, (s)] with their errors.</summary>
/// <param name="MuC">μc.</param>
/// <param name="MuCSe">Standard error of μc.</param>
/// <param name="Beta">β.</param>
/// <param name="BetaSe">Standard error of β.</param>
/// <param name="Coefficients">[C, T₀] or [C, T₀, s].</param>
/// <param name="CoefficientSe">Standard errors of <paramref name="Coefficients"/>.</param>
/// <param name="ChiSquare">Weighted residual sum of squares of the periods.</param>
/// <param name="Parameters">Fitted parameters p (coefficients, β and μc).</param>
internal readonly record struct OffsetPowerLawSolution(
    double MuC, double MuCSe, double Beta, double BetaSe, double[] Coefficients, double[] CoefficientSe, double ChiSquare, int Parameters);

/// <summary>
/// Fits T = C·d^(−β) + T₀ (+ s·d), d = |μ − μc|, C &gt; 0, by weighted least squares of the periods themselves.
/// </summary>
/// <remarks>
/// <para>Law: the bottleneck passage gives C·d^(−β) (β = ½ at a saddle-node on the circle; Strogatz, Nonlinear Dynamics
/// and Chaos, 2nd ed., 2015, §4.3); the rest of the orbit adds a time T₀ that depends little on μ, and s·d lets it
/// drift. On log T the offset is a d^β correction, log(1 + (T₀/C)d^β), which exp(κ₁d + κ₂d²) does not follow.</para>
/// <para>Fit: given (μc, β) the law is linear in (C, T₀[, s]): QR (MathNet) of Tᵢ/σᵢ. Nested profile: for each μc,
/// χ² is minimised over log β in [log 0.02, log 5] by a grid and Brent's method (<see cref="GridSearch"/>); the
/// outer profile over the log distance of μc beyond the run nearest onset (10⁻⁶ to 20 spans) likewise. Points with
/// C ≤ 0 are outside the model. A minimum on an end of either range means the data do not place the law there: no fit.
/// On logarithmic periods T = −(1/λ)ln d + c the profile runs to β → 0 (d^(−β) = 1 − β ln d + …, with C → ∞,
/// T₀ → −∞, Cβ → 1/λ), ends on the lower bound and the form is dropped.</para>
/// <para>Errors: Jacobian of all parameters (analytic) scaled by χ²/(n − p), the convention of SciPy's curve_fit with
/// absolute_sigma=False. Cost: about 10⁴ small QR solves. Minimum: p + 2 runs.</para>
/// </remarks>
internal static class OffsetPowerLawFit
{
    /// <summary>Smallest β searched; a profile minimum here means a logarithm, not a power law.</summary>
    public const double LowestExponent = 0.02;

    /// <summary>Largest β searched.</summary>
    public const double HighestExponent = 5.0;

    private const int MuGrid = 60;
    private const int BetaGrid = 40;

    /// <summary>
    /// Fits the law to <paramref name="pts"/> (sorted by μ) turning on side <paramref name="side"/>; null when the
    /// profile minimum is on an end of a search range, C ≤ 0, or fewer than p + 2 runs.
    /// </summary>
    public static OffsetPowerLawSolution? Fit(PeriodPoint[] pts, int side, double edge, double span, bool linear)
    {
        var m = linear ? 3 : 2;
        var p = m + 2;
        var n = pts.Length;
        if (n - p < 2)
        {
            return null;
        }

        double MuAt(double logd) => edge - (side * Math.Exp(logd));
        GridMinimum BestBeta(double muc) => GridSearch.Minimize(
            lb => Inner(pts, side, muc, Math.Exp(lb), m, out _), Math.Log(LowestExponent), Math.Log(HighestExponent), BetaGrid, 1e-9);

        var outer = GridSearch.Minimize(logd => BestBeta(MuAt(logd)).Value, Math.Log(1e-6 * span), Math.Log(20 * span), MuGrid, 1e-10);
        if (outer.GridIndex < 0 || outer.OnEdge || !double.IsFinite(outer.Value))
        {
            return null;
        }

        var muc = MuAt(outer.X);
        var inner = BestBeta(muc);
        if (inner.GridIndex < 0 || inner.OnEdge)
        {
            return null;
        }

        var beta = Math.Exp(inner.X);
        var chi2 = Inner(pts, side, muc, beta, m, out var coef);
        if (!double.IsFinite(chi2) || !(coef[0] > 0))
        {
            return null;
        }

        // Jacobian of the weighted model in (C, T₀, [s], β, μc), analytic: ∂/∂β = −C d^(−β) ln d,
        // ∂/∂μc = side·(βC d^(−β−1) − s) since ∂d/∂μc = −side.
        var j = Matrix<double>.Build.Dense(n, p);
        for (var i = 0; i < n; i++)
        {
            var d = side * (pts[i].Mu - muc);
            var w = 1 / pts[i].StandardError;
            var power = Math.Pow(d, -beta);
            var slope = linear ? coef[2] : 0;
            j[i, 0] = power * w;
            j[i, 1] = w;
            if (linear)
            {
                j[i, 2] = d * w;
            }

            j[i, m] = -coef[0] * power * Math.Log(d) * w;
            j[i, m + 1] = side * ((beta * coef[0] * power / d) - slope) * w;
        }

        var dof = n - p;
        var cov = j.TransposeThisAndMultiply(j).Inverse() * (chi2 / dof);
        var se = Enumerable.Range(0, p).Select(k => Math.Sqrt(cov[k, k])).ToArray();
        if (se.Any(v => !double.IsFinite(v)))
        {
            return null;
        }

        return new OffsetPowerLawSolution(muc, se[m + 1], beta, se[m], coef, se[..m], chi2, p);
    }

    // Weighted linear least squares of T on [d^(−β), 1, (d)] for given μc and β; returns χ² (∞ outside the model).
    private static double Inner(PeriodPoint[] pts, int side, double muc, double beta, int m, out double[] coef)
    {
        var chi2 = WeightedLinearFit.ChiSquare(pts.Length, m, (int i, double[] g, out double y, out double w) =>
        {
            var d = side * (pts[i].Mu - muc);
            g[0] = Math.Pow(d, -beta);
            g[1] = 1.0;
            if (m > 2)
            {
                g[2] = d;
            }

            (y, w) = (pts[i].Period, 1 / pts[i].StandardError);
            return d > 0;
        }, out coef);
        return coef[0] > 0 ? chi2 : double.PositiveInfinity;
    }
}
