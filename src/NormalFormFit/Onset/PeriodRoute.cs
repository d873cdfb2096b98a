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
    /// <param name="maxLawCoefficients">Most coefficients of the square-root law T = Σ cₖd^((k−1)/2): 2 (α, β), 3 (+ γd^½)
    /// or 4 (default; + δd), each while two residual degrees of freedom remain.</param>
    /// <param name="average">True (default): the onset averaged over all candidate laws with Akaike weights and the
    /// unconditional error of Burnham &amp; Anderson (<see cref="ModelAverage"/>); false: the single law AICc prefers.</param>
    public static OnsetEstimate Estimate(IReadOnlyList<TrendPoint> points, int maxLawCoefficients = 4, bool average = true)
    {
        ArgumentNullException.ThrowIfNull(points);
        var poly = TrendFit.Root(OnsetRoute.Period, points);
        var laws = FitLaws(points, maxLawCoefficients);
        if (laws.Count == 0)
        {
            return poly;
        }

        var polyAicc = poly.Trend is { } t ? TrendFit.Aicc(t, points.Count) : double.PositiveInfinity;
        var law = laws.MinBy(l => l.Aicc)!;
        if (!average)
        {
            return law.Aicc < polyAicc ? ToEstimate(law, polyAicc) : poly;
        }

        // The candidates: straight line and quadratic in T⁻², and each square-root law; one likelihood of the measured
        // periods (see the class remarks), so their AICc compare.
        var estimates = new List<(OnsetEstimate Estimate, double Aicc, string Name, SquareRootLawResult? Law)>();
        foreach (var degree in new[] { 1, 2 })
        {
            var e = TrendFit.RootOfDegree(OnsetRoute.Period, points, degree);
            if (e.IsAvailable && e.Trend is { } tr)
            {
                estimates.Add((e, TrendFit.Aicc(tr, points.Count), degree == 1 ? "straight line in T⁻²" : "quadratic in T⁻²", null));
            }
        }

        foreach (var l in laws)
        {
            estimates.Add((ToEstimate(l, polyAicc), l.Aicc, l.Law.Description, l));
        }

        var candidates = estimates.Select(e => new ModelCandidate(e.Name, e.Estimate.Value, e.Aicc, e.Estimate.Ci95, Quantile(e.Estimate.Curve!), e.Estimate.StandardError)).ToList();
        var avg = ModelAverage.Average(candidates);
        if (avg is null)
        {
            return law.Aicc < polyAicc ? ToEstimate(law, polyAicc) : poly;
        }

        // The best candidate is a square-root law, a truncation of the asymptotic series T = Σ cₖd^((k−1)/2): the next
        // order of the same series gets at least the best's weight, so that the interval carries the change the next
        // term makes — the error of a truncated expansion is of the order of its first omitted term (common practice,
        // no source). AICc cannot do this alone: it weighs the fit to the runs, but the onset is an extrapolation, and a
        // term too small to show in the residuals can still move it by more than its error. Two cases: the best law
        // misses its runs far beyond their errors (nearly noise-free periods; AICc then reads the systematic misfit as
        // scatter), or it fits them within their errors (noisy periods; AICc then keeps the shorter law for its smaller
        // penalty). Measured on Morris–Lecar spike times (NormalFormFit.Bench signal-coverage, docs/methods.md): the
        // route's 95% interval covered the fold in 16/24 seeds at noise 0.3 with the shorter law alone, 24/24 with the
        // next order raised. The rotor and theta neuron, whose T⁻² is a polynomial, rarely prefer a law.
        var raised = false;
        if (estimates[avg.Best].Law is { } bestLaw
            && estimates.FindIndex(e => e.Law is { } l && l.Law.Coefficients.Length == bestLaw.Law.Coefficients.Length + 1) is var next and >= 0
            && candidates[next].Aicc > candidates[avg.Best].Aicc)
        {
            candidates[next] = candidates[next] with { Aicc = candidates[avg.Best].Aicc };
            avg = ModelAverage.Average(candidates)!;
            raised = true;
        }

        var best = estimates[avg.Best];
        var diags = best.Estimate.Diagnostics.Where(d => d.Code != "unbounded-interval").ToList();
        var inv = CultureInfo.InvariantCulture;
        if (best.Law is null && best.Estimate.Trend is { Degree: 2 })
        {
            diags.Add(new Diagnostic(Severity.Info, "curved-trend",
                "the period route uses a trend with a curvature term (preferred by AICc over a straight line)"));
        }

        if (avg.Weights.Count(w => w > 0) > 1)
        {
            diags.Add(new Diagnostic(Severity.Info, "period-laws-averaged", string.Create(inv,
                $"the period route averages its onset over the laws that compete for the periods (Akaike weights: {avg.Describe(candidates)}); the interval carries their spread (Burnham & Anderson 2002, eq. 4.9)")));
        }

        // The series T = Σ cₖd^((k−1)/2) truncated: its highest-order law fitted carries most weight, or the orders
        // beyond the first disagree by more than their own errors — further terms, which these runs cannot resolve,
        // could move the onset again.
        var top = estimates.Where(e => e.Law is not null).MaxBy(e => e.Law!.Law.Coefficients.Length);
        if (best.Law is { } bl && Misfits(bl.Law) && (raised || ReferenceEquals(best.Law, top.Law)))
        {
            diags.Add(new Diagnostic(Severity.Warning, "period-law-truncated", string.Create(inv,
                $"the period route's best law ({best.Law!.Law.Description}) misses its runs far beyond their errors (χ²/dof = {Numerics.ErrorDigits.Plain(best.Law.Law.ReducedChiSquare, 3)}): the expansion of the period is truncated; {(raised ? "the interval carries the change the next term makes" : "no higher order can be fitted to these runs, so the onset may lie beyond the interval")}; measure more runs close to onset")));
        }
        else if (raised)
        {
            diags.Add(new Diagnostic(Severity.Info, "period-law-next-order", string.Create(inv,
                $"the period route's best law ({best.Law!.Law.Description}) is a truncated series; the next term of the series enters the average with at least the best law's weight, so the interval carries the change it makes to the onset")));
        }

        if (double.IsInfinity(avg.Ci95.Low) || double.IsInfinity(avg.Ci95.High))
        {
            diags.Add(new Diagnostic(Severity.Warning, "unbounded-interval",
                "the data cannot bound the onset on one side by the period route (the periods do not bend enough toward a singularity); measure closer to onset"));
        }

        return best.Estimate with { Value = avg.Value, StandardError = avg.StandardError, Ci95 = avg.Ci95, Diagnostics = diags };
    }

    /// <summary>
    /// A law misfits when χ²/dof exceeds this multiple of the 0.999 quantile of χ²_dof/dof (common practice, no source:
    /// see <c>OnsetAnalysis.LawMisfitFactor</c>, which is this value).
    /// </summary>
    public const double MisfitFactor = 4.0;

    /// <summary>True when <paramref name="curve"/> misses its runs far beyond their errors (χ²/dof above
    /// <see cref="MisfitFactor"/> times the 0.999 quantile of χ²_dof/dof, MathNet's ChiSquared.InvCDF).</summary>
    public static bool Misfits(OnsetCurve curve)
    {
        ArgumentNullException.ThrowIfNull(curve);
        var dof = curve.DegreesOfFreedom;
        return dof >= 1 && double.IsFinite(curve.ReducedChiSquare)
            && curve.ReducedChiSquare > MisfitFactor * MathNet.Numerics.Distributions.ChiSquared.InvCDF(dof, 0.999) / dof;
    }

    /// <summary>The quantile that turned a curve's standard error into its interval.</summary>
    private static double Quantile(OnsetCurve curve) => curve.Scaled && curve.DegreesOfFreedom > 0
        ? MathNet.Numerics.Distributions.StudentT.InvCDF(0, 1, curve.DegreesOfFreedom, 0.975)
        : MathNet.Numerics.Distributions.Normal.InvCDF(0, 1, 0.975);

    /// <summary>Every square-root law with 2 … <paramref name="maxLawCoefficients"/> coefficients that could be fitted.</summary>
    internal static List<SquareRootLawResult> FitLaws(IReadOnlyList<TrendPoint> points, int maxLawCoefficients)
    {
        var found = new List<SquareRootLawResult>();
        for (var m = 2; m <= maxLawCoefficients; m++)
        {
            if (FitLaw(points, m, m) is { } l && l.Law.Coefficients.Length == m)
            {
                found.Add(l);
            }
        }

        return found;
    }

    /// <summary>The best square-root law for the points (null when it is no candidate).</summary>
    internal static SquareRootLawResult? FitLaw(IReadOnlyList<TrendPoint> points, int maxLawCoefficients = 2, int minLawCoefficients = 2)
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
        for (var m = minLawCoefficients; m <= maxLawCoefficients; m++)
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
