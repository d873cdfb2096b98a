using System.Globalization;

namespace NormalFormFit.Onset;

/// <summary>
/// The period route's onset: the polynomial trend of T⁻² (<see cref="TrendFit"/>) or the square-root law with an
/// offset (<see cref="SquareRootLawFit"/>), whichever AICc prefers on the same runs.
/// </summary>
/// <remarks>
/// <para>Same data, same likelihood: the polynomial is a Gaussian model for yᵢ = Tᵢ⁻² with errors σ_y,ᵢ, the law a
/// Gaussian model for Tᵢ with errors σ_T,ᵢ. Both are compared as densities of the measured periods: the polynomial's
/// density of T is its density of y times the Jacobian |dy/dT| = 2/T³. With σ_T,ᵢ = σ_y,ᵢTᵢ³/2 (the delta method at
/// the measured Tᵢ, the same per-run errors on both scales), that Jacobian cancels the change of the error scale
/// exactly, so −2 ln L = n ln(χ²/n) + const with one and the same constant on both scales. AICc = n ln(χ²/n) + 2k +
/// 2k(k + 1)/(n − k − 1) (Hurvich &amp; Tsai 1989), k = fitted parameters + 1 (the variance scale), is then comparable
/// between the laws. σ_y are the smoothed per-run errors the polynomial uses (<see cref="TrendFit.SmoothErrors"/>),
/// carried to T by that relation, so that both laws see one error model.</para>
/// <para>The law is a candidate with at least six runs (so that its AICc is finite, as for the quadratic trend). Runs
/// below onset (relaxation rates, no period) cannot enter the law; they join the polynomial trend afterwards in
/// <c>OnsetAnalysis.Combine</c>, and when they do, the polynomial with them is kept (they bracket the onset).</para>
/// </remarks>
public static class PeriodRoute
{
    /// <summary>Fewest runs with which the square-root law competes.</summary>
    public const int MinimumRunsForLaw = 6;

    /// <summary>The period route's estimate from the runs' (μ, T⁻², se(T⁻²)) points.</summary>
    /// <param name="points">Turning runs: y = T⁻² with se(y) = 2 se(T)/T³.</param>
    /// <param name="maxLawCoefficients">2: only T = αd^−½ + β; 3 (default): also with the next term γd^½ of the same
    /// expansion, the two chosen by AICc, as the scaling law chooses its corrections.</param>
    public static OnsetEstimate Estimate(IReadOnlyList<TrendPoint> points, int maxLawCoefficients = 3)
    {
        ArgumentNullException.ThrowIfNull(points);
        var poly = TrendFit.Root(OnsetRoute.Period, points);
        var law = FitLaw(points, maxLawCoefficients);
        if (law is null)
        {
            return poly;
        }

        var polyAicc = poly.Trend is { } t ? TrendFit.Aicc(t, points.Count) : double.PositiveInfinity;
        if (!(law.Aicc < polyAicc))
        {
            return poly;
        }

        return ToEstimate(law, polyAicc);
    }

    /// <summary>The best square-root law for the points (null when it is no candidate).</summary>
    internal static SquareRootLawResult? FitLaw(IReadOnlyList<TrendPoint> points, int maxLawCoefficients = 2)
    {
        if (points.Count < MinimumRunsForLaw || points.Any(p => !(p.Y > 0)))
        {
            return null;
        }

        var smoothed = TrendFit.SmoothErrors(points);

        // Turning side from the straight line of T⁻² (the side where T⁻² grows away from onset).
        var line = TrendFit.Fit(smoothed, 1);
        var side = Math.Sign(line.Coefficients[1]);
        if (side == 0)
        {
            return null;
        }

        var periods = smoothed.Select(p =>
        {
            var t = 1 / Math.Sqrt(p.Y);
            return new PeriodSample(p.Mu, t, p.StandardError * t * t * t / 2);
        }).ToList();
        SquareRootLawResult? best = null;
        for (var m = 2; m <= maxLawCoefficients; m++)
        {
            // Keep two residual degrees of freedom, as the quadratic trend does.
            if (periods.Count - (m + 1) < 2)
            {
                break;
            }

            var fit = SquareRootLawFit.Fit(periods, side, m);
            if (fit is not null && (best is null || fit.Aicc < best.Aicc))
            {
                best = fit;
            }
        }

        return best is { Aicc: var a } && double.IsFinite(a) ? best : null;
    }

    private static OnsetEstimate ToEstimate(SquareRootLawResult fit, double polyAicc)
    {
        var inv = CultureInfo.InvariantCulture;
        var law = fit.Law;
        var diags = new List<Diagnostic>
        {
            new(Severity.Info, "period-law-offset", string.Create(inv,
                $"the period route fits {law.Description} to the periods (preferred by AICc over a polynomial in T⁻², ΔAICc = {polyAicc - fit.Aicc:F1}): the time spent outside the bottleneck adds a nearly constant offset that bends T⁻² near onset")),
        };
        if (double.IsInfinity(fit.Ci95.Low) || double.IsInfinity(fit.Ci95.High))
        {
            diags.Add(new Diagnostic(Severity.Warning, "unbounded-interval",
                "the data cannot bound the onset on one side by the period route (the periods do not bend enough toward a singularity); measure closer to onset"));
        }

        var se = Math.Sqrt(law.Covariance[law.ParameterCount - 1, law.ParameterCount - 1]);
        return new OnsetEstimate(OnsetRoute.Period, law.Onset, se, fit.Ci95, fit.Points.Count, law, diags);
    }
}
