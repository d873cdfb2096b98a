namespace NormalFormFit.Numerics;

/// <summary>
/// Akaike's information criterion for least-squares fits with Gaussian errors of unknown scale, up to a constant
/// common to all models fitted to the same n points: AIC = n ln(RSS/n) + 2k (Akaike 1974), and its small-sample
/// correction AICc = AIC + 2k(k + 1)/(n − k − 1) (Hurvich &amp; Tsai 1989; Burnham &amp; Anderson, Model Selection and
/// Multimodel Inference, 2nd ed., 2002, §2.4).
/// </summary>
/// <remarks>
/// k counts every estimated parameter, the error scale included. RSS is the (weighted) residual sum of squares,
/// floored at 10⁻³⁰⁰ so that an exact fit gives a finite value. O(1).
/// </remarks>
internal static class InformationCriteria
{
    /// <summary>AIC = n ln(RSS/n) + 2k.</summary>
    /// <param name="rss">Residual sum of squares (χ² for a weighted fit).</param>
    /// <param name="n">Number of data points.</param>
    /// <param name="k">Number of estimated parameters, the error scale included.</param>
    public static double Aic(double rss, int n, int k) => (n * Math.Log(Math.Max(rss, 1e-300) / n)) + (2 * k);

    /// <summary>AICc = AIC + 2k(k + 1)/(n − k − 1); +∞ when n ≤ k + 1 (the correction is undefined).</summary>
    /// <param name="rss">Residual sum of squares (χ² for a weighted fit).</param>
    /// <param name="n">Number of data points.</param>
    /// <param name="k">Number of estimated parameters, the error scale included.</param>
    public static double Aicc(double rss, int n, int k) =>
        n - k - 1 > 0 ? Aic(rss, n, k) + (2.0 * k * (k + 1) / (n - k - 1)) : double.PositiveInfinity;
}
