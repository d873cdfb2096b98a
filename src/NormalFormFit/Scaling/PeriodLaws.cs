
namespace NormalFormFit.Scaling;

/// <summary>The three period laws weighed against each other.</summary>
public enum PeriodLaw
{
    /// <summary>Saddle-node on the circle, T = C(μ−μc)^(−½) + c.</summary>
    SaddleNode,

    /// <summary>Homoclinic, T = −(1/λ)ln(μ−μc) + c.</summary>
    Homoclinic,

    /// <summary>Finite period at onset, T = T₀ + s(μ−μ̄) + q(μ−μ̄)².</summary>
    FinitePeriod,
}

/// <summary>One period law fitted to the runs.</summary>
/// <param name="Law">Which law.</param>
/// <param name="Onset">μc of the law (NaN for the finite-period law, which has none).</param>
/// <param name="ResidualSumOfSquares">Weighted residual sum of squares.</param>
/// <param name="Aic">Akaike's criterion with the variance scale estimated, n·ln(RSS/n) + 2k.</param>
/// <param name="AtBoundary">True when μc sits at the largest distance allowed (the singularity is out of reach of the runs).</param>
public sealed record PeriodLawFit(PeriodLaw Law, double Onset, double ResidualSumOfSquares, double Aic, bool AtBoundary);

/// <summary>Information-criterion weights of the three period laws (they sum to one).</summary>
/// <param name="SaddleNode">T = C(μ−μc)^(−½) + c.</param>
/// <param name="Homoclinic">T = −(1/λ)ln(μ−μc) + c.</param>
/// <param name="FinitePeriod">T = T₀ + s(μ−μ̄) + q(μ−μ̄)²: finite at onset.</param>
/// <param name="Fits">The three fits.</param>
public sealed record PeriodLawWeights(double SaddleNode, double Homoclinic, double FinitePeriod, IReadOnlyList<PeriodLawFit> Fits)
{
    /// <summary>The law with the largest weight.</summary>
    public PeriodLaw Best => SaddleNode >= Homoclinic && SaddleNode >= FinitePeriod ? PeriodLaw.SaddleNode
        : Homoclinic >= FinitePeriod ? PeriodLaw.Homoclinic : PeriodLaw.FinitePeriod;

    /// <summary>The largest weight.</summary>
    public double BestWeight => Math.Max(SaddleNode, Math.Max(Homoclinic, FinitePeriod));
}

/// <summary>
/// Fits three period laws to the same runs and weighs them: saddle-node on the circle T = C d^(−½) + c (Strogatz,
/// Nonlinear Dynamics and Chaos, 2nd ed., §4.3: the bottleneck passage plus the time elsewhere), homoclinic
/// T = −(1/λ) ln d + c (Gaspard 1990; Strogatz §8.4), finite period T = T₀ + s x + q x² (Hopf: the period stays finite).
/// d = |μ − μc| on the turning side.
/// </summary>
/// <remarks>
/// Weighted least squares of T with σ = se(T) smoothed across μ (as the onset trends do); given μc the singular laws are
/// linear in their two coefficients (C &gt; 0, 1/λ &gt; 0 enforced), μc profiled over a log grid of distances from the
/// nearest run up to one span of the runs, then golden section. A singularity farther than the span of the runs cannot
/// be told from a smooth trend, so it is not allowed (common practice, no source). Every law has three parameters, so
/// the AIC penalties are equal and the Akaike weights exp(−ΔAIC/2)/Σ (Burnham &amp; Anderson 2002, §2.9) compare residuals
/// only. Minimum: four runs. Cost O(n × 200).
/// </remarks>
public static class PeriodLaws
{
    /// <summary>Fits and weighs the three laws; null with fewer than four usable runs.</summary>
    public static PeriodLawWeights? Weigh(IReadOnlyList<PeriodPoint> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var pts = runs.Where(r => r.Period > 0 && r.StandardError > 0 && double.IsFinite(r.StandardError)).OrderBy(r => r.Mu).ToArray();
        var n = pts.Length;
        if (n < 4)
        {
            return null;
        }

        var smoothed = Onset.TrendFit.SmoothErrors(pts.Select(p => new Onset.TrendPoint(p.Mu, p.Period, p.StandardError)).ToList());
        var sig = smoothed.Select(p => p.StandardError).ToArray();
        var side = pts[^1].Period < pts[0].Period ? 1 : -1;
        var edge = side > 0 ? pts[0].Mu : pts[^1].Mu;
        var span = pts[^1].Mu - pts[0].Mu;
        if (!(span > 0))
        {
            return null;
        }

        var sn = Singular(pts, sig, side, edge, span, d => Math.Pow(d, -0.5), PeriodLaw.SaddleNode);
        var ho = Singular(pts, sig, side, edge, span, d => -Math.Log(d), PeriodLaw.Homoclinic);
        var mean = pts.Average(p => p.Mu);
        var fpRss = Linear(pts, sig, x => [1.0, x - mean, (x - mean) * (x - mean)], out _);
        var fp = new PeriodLawFit(PeriodLaw.FinitePeriod, double.NaN, fpRss, Aic(fpRss, n), false);
        var fits = new[] { sn, ho, fp };
        var min = fits.Min(f => f.Aic);
        var w = fits.Select(f => double.IsFinite(f.Aic) ? Math.Exp(-0.5 * (f.Aic - min)) : 0.0).ToArray();
        var total = w.Sum();
        return new PeriodLawWeights(w[0] / total, w[1] / total, w[2] / total, fits);
    }

    // k = 4: three coefficients and the variance scale.
    private static double Aic(double rss, int n) => Numerics.InformationCriteria.Aic(rss, n, 4);

    private static PeriodLawFit Singular(PeriodPoint[] pts, double[] sig, int side, double edge, double span, Func<double, double> shape, PeriodLaw law)
    {
        double Rss(double logd)
        {
            var muc = edge - (side * Math.Exp(logd));
            var rss = Linear(pts, sig, mu => [shape(side * (mu - muc)), 1.0], out var c);
            return c[0] > 0 ? rss : double.PositiveInfinity;
        }

        // Distances from 10⁻⁶ of the span up to one span beyond the nearest run.
        var lo = Math.Log(1e-6 * span);
        var hi = Math.Log(span);
        var min = Numerics.GridSearch.Minimize(Rss, lo, hi, 120, 1e-10);
        if (min.GridIndex < 0)
        {
            return new PeriodLawFit(law, double.NaN, double.PositiveInfinity, double.PositiveInfinity, false);
        }

        return new PeriodLawFit(law, edge - (side * Math.Exp(min.X)), min.Value, Aic(min.Value, pts.Length), min.GridIndex == min.GridPoints - 1);
    }

    private static double Linear(PeriodPoint[] pts, double[] sig, Func<double, double[]> basis, out double[] coef) =>
        Numerics.WeightedLinearFit.ChiSquare(pts.Length, basis(pts[0].Mu).Length, (int i, double[] g, out double y, out double w) =>
        {
            basis(pts[i].Mu).CopyTo(g, 0);
            (y, w) = (pts[i].Period, 1.0 / sig[i]);
            return true;
        }, out coef);
}
