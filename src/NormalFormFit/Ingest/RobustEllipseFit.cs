using NormalFormFit.Numerics;
namespace NormalFormFit.Ingest;

/// <summary>
/// An ellipse fit that a few wrong positions do not pull off: iteratively reweighted least squares with Tukey's
/// biweight on the radial departure from the current ellipse.
/// </summary>
/// <remarks>
/// Each pass fits the direct least-squares ellipse (<see cref="EllipseFit"/>, Fitzgibbon, Pilu &amp; Fisher 1999) with
/// weights wᵢ·ψᵢ, where wᵢ are the caller's weights and ψᵢ = (1 − (ρᵢ/cσ)²)² for |ρᵢ| &lt; cσ, else 0: Tukey's biweight
/// (Beaton &amp; Tukey 1974, "The fitting of power series, meaning polynomials, illustrated on band-spectroscopic data",
/// Technometrics 16(2):147) with c = 4.685, the constant that gives 95 % efficiency at the normal. ρᵢ = rᵢ − 1 is the
/// departure of the point from the ellipse, rᵢ its radius in the ellipse's axes scaled to 1, and σ = 1.4826·MAD(ρ)
/// the robust scale (Hampel 1974, J. Am. Stat. Assoc. 69:383), held at least <see cref="MinScale"/> so that exact
/// points do not make every weight vanish. Starts from the plain fit and stops when the ellipse moves by less than
/// 1e-9 of its size or after <see cref="MaxPasses"/> passes. Cost O(n) per pass.
/// </remarks>
public static class RobustEllipseFit
{
    /// <summary>Tukey's biweight tuning constant (95 % efficiency at the normal).</summary>
    public const double Biweight = 4.685;

    /// <summary>Smallest robust scale of the radial departure (0.1 % of the axes).</summary>
    public const double MinScale = 1e-3;

    /// <summary>Most reweighting passes.</summary>
    public const int MaxPasses = 20;

    /// <summary>Fits the ellipse; null when even the plain fit has none. <paramref name="scale"/> is the final robust scale σ.</summary>
    public static Ellipse? Fit(ReadOnlySpan<double> x, ReadOnlySpan<double> y, ReadOnlySpan<double> weights, out double scale)
    {
        scale = double.NaN;
        var ellipse = EllipseFit.Fit(x, y, weights);
        if (ellipse is null)
        {
            return null;
        }

        var n = x.Length;
        var rho = new double[n];
        var w = new double[n];
        for (var pass = 0; pass < MaxPasses; pass++)
        {
            for (var i = 0; i < n; i++)
            {
                rho[i] = ellipse.Normalize(x[i], y[i]).Radius - 1;
            }

            scale = Math.Max(RobustScale(Strided(rho)), MinScale);
            var cut = Biweight * scale;
            for (var i = 0; i < n; i++)
            {
                var u = rho[i] / cut;
                var psi = Math.Abs(u) < 1 ? (1 - (u * u)) * (1 - (u * u)) : 0.0;
                w[i] = (weights.IsEmpty ? 1.0 : weights[i]) * psi;
            }

            var next = EllipseFit.Fit(x, y, w);
            if (next is null)
            {
                return ellipse;
            }

            var size = ellipse.SemiMajor;
            var moved = Math.Abs(next.CentreX - ellipse.CentreX) + Math.Abs(next.CentreY - ellipse.CentreY)
                + Math.Abs(next.SemiMajor - ellipse.SemiMajor) + Math.Abs(next.SemiMinor - ellipse.SemiMinor);
            ellipse = next;
            if (moved < 1e-9 * size)
            {
                break;
            }
        }

        for (var i = 0; i < n; i++)
        {
            rho[i] = ellipse.Normalize(x[i], y[i]).Radius - 1;
        }

        scale = Math.Max(RobustScale(Strided(rho)), MinScale);
        return ellipse;
    }

    /// <summary>1.4826 × the median absolute deviation from the median (Hampel 1974): σ for normal data. O(n log n).</summary>
    public static double RobustScale(ReadOnlySpan<double> values)
    {
        if (values.IsEmpty)
        {
            return double.NaN;
        }

        var v = values.ToArray();
        var med = SampleStatistics.MedianInPlace(v);
        for (var i = 0; i < v.Length; i++)
        {
            v[i] = Math.Abs(v[i] - med);
        }

        return 1.4826 * SampleStatistics.MedianInPlace(v);
    }

    /// <summary>At most 16 385 evenly spread values: the scale of a long record from a fixed-size sample (O(n)).</summary>
    internal static double[] Strided(double[] v)
    {
        var stride = Math.Max(1, v.Length / 16384);
        if (stride == 1)
        {
            return v;
        }

        var s = new double[((v.Length - 1) / stride) + 1];
        for (var i = 0; i < s.Length; i++)
        {
            s[i] = v[i * stride];
        }

        return s;
    }

}
