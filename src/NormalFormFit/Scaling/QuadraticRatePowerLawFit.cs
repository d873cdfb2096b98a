using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Numerics;

namespace NormalFormFit.Scaling;

/// <summary>One fit of T = C·(d + κd²)^(−β): μc, β, κ and log C with their errors.</summary>
/// <param name="MuC">μc.</param>
/// <param name="MuCSe">Standard error of μc.</param>
/// <param name="Beta">β.</param>
/// <param name="BetaSe">Standard error of β.</param>
/// <param name="LogC">log C.</param>
/// <param name="Kappa">κ, the first-order change of the rate with the distance from onset.</param>
/// <param name="ChiSquare">Weighted residual sum of squares of log T (weights T/se(T)).</param>
internal readonly record struct QuadraticRateSolution(double MuC, double MuCSe, double Beta, double BetaSe, double LogC, double Kappa, double ChiSquare)
{
    /// <summary>Fitted parameters: log C, β, κ, μc.</summary>
    public const int Parameters = 4;
}

/// <summary>
/// Fits T = C·(d + κd²)^(−β), d = |μ − μc|, on log T: the power law of a rate that vanishes linearly at onset and
/// bends to first order away from it.
/// </summary>
/// <remarks>
/// <para>Law: at a saddle-node on the circle the passage time is T ≈ π/√(ab) (Strogatz, Nonlinear Dynamics and Chaos,
/// 2nd ed., 2015, §4.3), and the product ab of the normal form's coefficients is a smooth function of μ that vanishes at
/// μc: ab ∝ d(1 + κd + …). Its first-order term is the next order of the power law that the exponent fit needs when
/// the runs reach far from onset. The rotor θ̇ = μ − sin θ has T = 2π/√(μ² − 1) = √2·π·(d + d²/2)^(−½) exactly (Adler
/// 1946; κ = ½); the theta neuron T = π/√μ has κ = 0 (Ermentrout &amp; Kopell 1986).</para>
/// <para>Fit: T^(−1/β) = C^(−1/β)(d + κd²) is a quadratic polynomial of μ with a root at μc. So β is profiled
/// (grid over log β in [log 0.02, log 5], then Brent's method, <see cref="GridSearch"/>) with, for each β, a weighted
/// linear fit of that quadratic to yᵢ = Tᵢ^(−1/β) with σ_y = yᵢ·se(Tᵢ)/(βTᵢ) (the delta method: to first order the
/// same χ² as on log T); μc is its root next to the run nearest onset, A = side·p′(μc) &gt; 0, κ = p₂/A, C = A^(−β), and
/// κd must stay a correction, |κ|·dmax &lt; 1 (else the law is not identified: as κ → ∞ it becomes the pure power law
/// of twice the exponent). The
/// result is then polished on the χ² of log T itself (weights Tᵢ/se(Tᵢ), the likelihood of the other log-T forms of
/// <see cref="ScalingFit"/>) by damped Gauss–Newton steps (Levenberg 1944; Marquardt 1963) over (log C, β, κ, μc).
/// A profile minimum on an end of the β range, no root beyond the runs, or A ≤ 0 means no fit.</para>
/// <para>Errors: Jacobian of all four parameters (central differences) scaled by χ²/(n − 4), the convention of SciPy's
/// curve_fit with absolute_sigma=False. Minimum: six runs (two residual degrees of freedom).</para>
/// </remarks>
internal static class QuadraticRatePowerLawFit
{
    private const int BetaGrid = 40;

    /// <summary>Largest |κ|·dmax accepted (dmax the farthest run's distance from μc).</summary>
    public const double MaximumCorrection = 1.0;

    /// <summary>The fit, or null when fewer than six runs or the law cannot be placed (see the class remarks).</summary>
    public static QuadraticRateSolution? Fit(PeriodPoint[] pts, int side, double edge, double span)
    {
        const int p = QuadraticRateSolution.Parameters;
        var n = pts.Length;
        if (n - p < 2 || !(span > 0))
        {
            return null;
        }

        var profile = GridSearch.Minimize(
            lb => Start(pts, side, edge, Math.Exp(lb)) is { } s ? s.Chi2 : double.PositiveInfinity,
            Math.Log(OffsetPowerLawFit.LowestExponent), Math.Log(OffsetPowerLawFit.HighestExponent), BetaGrid, 1e-9);
        if (profile.GridIndex < 0 || profile.OnEdge || Start(pts, side, edge, Math.Exp(profile.X)) is not { } start)
        {
            return null;
        }

        var x = Polish(pts, side, edge, start.X);
        var chi2 = LogChi2(pts, side, edge, x);
        if (!double.IsFinite(chi2) || !(x[1] > 0) || !IsCorrection(pts, side, x[3], x[2]))
        {
            return null;
        }

        var j = Jacobian(pts, side, edge, x);
        var cov = j.TransposeThisAndMultiply(j).Inverse() * (chi2 / (n - p));
        var (betaSe, mucSe) = (Math.Sqrt(cov[1, 1]), Math.Sqrt(cov[3, 3]));
        return double.IsFinite(betaSe) && double.IsFinite(mucSe)
            ? new QuadraticRateSolution(x[3], mucSe, x[1], betaSe, x[0], x[2], chi2)
            : null;
    }

    // For a given β: the weighted quadratic fit of T^(−1/β) in μ, its root beyond the nearest run, and the parameters
    // (log C, β, κ, μc) with the fit's χ² on the y scale; null when no root lies beyond the runs or A ≤ 0.
    private static (double[] X, double Chi2)? Start(PeriodPoint[] pts, int side, double edge, double beta)
    {
        var mid = 0.5 * (pts[0].Mu + pts[^1].Mu);
        var chi2 = WeightedLinearFit.ChiSquare(pts.Length, 3, (int i, double[] g, out double y, out double w) =>
        {
            var u = pts[i].Mu - mid;
            (g[0], g[1], g[2]) = (1.0, u, u * u);
            y = Math.Pow(pts[i].Period, -1 / beta);
            w = beta * pts[i].Period / (y * pts[i].StandardError);
            return double.IsFinite(y) && double.IsFinite(w);
        }, out var c);
        if (!double.IsFinite(chi2))
        {
            return null;
        }

        // Roots of c₀ + c₁u + c₂u²; the one beyond the nearest run on the far side from the others, closest to it.
        var roots = new List<double>();
        if (Math.Abs(c[2]) < 1e-300)
        {
            roots.Add(-c[0] / c[1]);
        }
        else
        {
            var disc = (c[1] * c[1]) - (4 * c[2] * c[0]);
            if (disc < 0)
            {
                return null;
            }

            var q = -0.5 * (c[1] + (Math.Sign(c[1] == 0 ? 1 : c[1]) * Math.Sqrt(disc)));
            roots.Add(q / c[2]);
            if (q != 0)
            {
                roots.Add(c[0] / q);
            }
        }

        var beyond = roots.Select(r => r + mid).Where(m => side * (edge - m) > 0 && double.IsFinite(m)).ToList();
        if (beyond.Count == 0)
        {
            return null;
        }

        var muc = beyond.MinBy(m => Math.Abs(edge - m));
        var a = side * (c[1] + (2 * c[2] * (muc - mid)));
        if (!(a > 0))
        {
            return null;
        }

        var kappa = c[2] / a;
        return IsCorrection(pts, side, muc, kappa) ? ([-beta * Math.Log(a), beta, kappa, muc], chi2) : null;
    }

    // κd is a correction: smaller than the leading term at every run, |κ|·dmax < 1 (common practice, no source).
    // Without the bound the law is not identified: as κ → ∞, (d + κd²)^(−β) → κ^(−β)d^(−2β), the pure power law of
    // twice the exponent.
    private static bool IsCorrection(PeriodPoint[] pts, int side, double muc, double kappa)
    {
        var far = side > 0 ? pts[^1].Mu : pts[0].Mu;
        return Math.Abs(kappa) * side * (far - muc) < MaximumCorrection;
    }

    // χ² of log T for x = (log C, β, κ, μc); ∞ where a run lies at or beyond μc or the rate is not positive.
    private static double LogChi2(PeriodPoint[] pts, int side, double edge, double[] x)
    {
        if (!(side * (edge - x[3]) > 0))
        {
            return double.PositiveInfinity;
        }

        var sum = 0.0;
        foreach (var pt in pts)
        {
            var r = Residual(pt, side, x);
            if (!double.IsFinite(r))
            {
                return double.PositiveInfinity;
            }

            sum += r * r;
        }

        return sum;
    }

    private static double Residual(PeriodPoint pt, int side, double[] x)
    {
        var d = side * (pt.Mu - x[3]);
        var rate = d + (x[2] * d * d);
        return d > 0 && rate > 0 ? (Math.Log(pt.Period) - x[0] + (x[1] * Math.Log(rate))) * pt.Period / pt.StandardError : double.NaN;
    }

    // Jacobian of the weighted residuals' model (the negative of ∂r/∂x) by central differences.
    private static Matrix<double> Jacobian(PeriodPoint[] pts, int side, double edge, double[] x)
    {
        var j = Matrix<double>.Build.Dense(pts.Length, x.Length);
        var dist = Math.Abs(edge - x[3]);
        for (var k = 0; k < x.Length; k++)
        {
            var h = k == 3 ? 1e-6 * dist : 1e-6 * Math.Max(Math.Abs(x[k]), k == 2 ? 1 / Math.Max(dist, 1e-12) : 1.0);
            var up = (double[])x.Clone();
            var down = (double[])x.Clone();
            up[k] += h;
            down[k] -= h;
            for (var i = 0; i < pts.Length; i++)
            {
                j[i, k] = -(Residual(pts[i], side, up) - Residual(pts[i], side, down)) / (2 * h);
            }
        }

        return j;
    }

    // Damped Gauss–Newton (Levenberg–Marquardt) on the χ² of log T; a step is kept only when χ² falls.
    private static double[] Polish(PeriodPoint[] pts, int side, double edge, double[] x0)
    {
        var x = (double[])x0.Clone();
        var chi2 = LogChi2(pts, side, edge, x);
        var lambda = 1e-3;
        for (var iter = 0; iter < 100 && double.IsFinite(chi2); iter++)
        {
            var j = Jacobian(pts, side, edge, x);
            var r = Vector<double>.Build.Dense(pts.Length, i => Residual(pts[i], side, x));
            var jtj = j.TransposeThisAndMultiply(j);
            var g = j.TransposeThisAndMultiply(r);
            var improved = false;
            while (lambda < 1e12)
            {
                var damped = jtj.Clone();
                for (var k = 0; k < x.Length; k++)
                {
                    damped[k, k] *= 1 + lambda;
                }

                var step = damped.Solve(g);
                var trial = x.Select((v, k) => v + step[k]).ToArray();
                var c = LogChi2(pts, side, edge, trial);
                if (c < chi2)
                {
                    var done = chi2 - c < 1e-12 * Math.Max(chi2, 1e-300);
                    (x, chi2, lambda) = (trial, c, Math.Max(lambda / 10, 1e-12));
                    improved = !done;
                    break;
                }

                lambda *= 10;
            }

            if (!improved)
            {
                break;
            }
        }

        return x;
    }
}
