using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Ingest;

/// <summary>An ellipse in the plane: centre, semi-axes and the direction of the major axis.</summary>
/// <param name="CentreX">Centre, x.</param>
/// <param name="CentreY">Centre, y.</param>
/// <param name="SemiMajor">Semi-major axis (≥ <paramref name="SemiMinor"/>).</param>
/// <param name="SemiMinor">Semi-minor axis.</param>
/// <param name="Tilt">Angle of the major axis from +x towards +y, radians in (−π/2, π/2].</param>
/// <param name="Conic">Coefficients (a, b, c, d, e, f) of a x² + b xy + c y² + d x + e y + f = 0, unit norm, a + c &gt; 0.</param>
public sealed record Ellipse(double CentreX, double CentreY, double SemiMajor, double SemiMinor, double Tilt, double[] Conic)
{
    /// <summary>
    /// The point in the ellipse's own axes, scaled by the semi-axes: its angle is the parametric angle s of
    /// (x, y) = centre + R(tilt)·(A cos s, B sin s), its radius is 1 on the ellipse.
    /// </summary>
    public (double Angle, double Radius) Normalize(double x, double y)
    {
        var (sin, cos) = Math.SinCos(Tilt);
        var dx = x - CentreX;
        var dy = y - CentreY;
        var u = ((cos * dx) + (sin * dy)) / SemiMajor;
        var v = ((-sin * dx) + (cos * dy)) / SemiMinor;
        return (Math.Atan2(v, u), Math.Sqrt((u * u) + (v * v)));
    }
}

/// <summary>Direct least-squares ellipse fit.</summary>
/// <remarks>
/// Minimises Σ wᵢ (aᵀDᵢ)² subject to 4ac − b² = 1, where Dᵢ = (xᵢ², xᵢyᵢ, yᵢ², xᵢ, yᵢ, 1) (Fitzgibbon, Pilu &amp; Fisher
/// 1999, "Direct least square fitting of ellipses", IEEE PAMI 21(5)), in the numerically stable reduced form of
/// Halíř &amp; Flusser (1998, "Numerically stable direct least squares fitting of ellipses", WSCG): the linear part is
/// eliminated and a 3×3 eigenproblem (MathNet EVD) remains; its one eigenvector with 4ac − b² &gt; 0 is the ellipse.
/// Data are centred and scaled before the fit for conditioning. Cost O(n); minimum five points not on a line.
/// Always returns an ellipse (never a hyperbola); exact for noise-free points on an ellipse.
/// </remarks>
public static class EllipseFit
{
    /// <summary>Fits an ellipse; null when the points do not determine one (fewer than five, collinear, degenerate).</summary>
    /// <param name="x">Abscissae.</param>
    /// <param name="y">Ordinates.</param>
    /// <param name="weights">Non-negative weights, or empty for equal weights.</param>
    public static Ellipse? Fit(ReadOnlySpan<double> x, ReadOnlySpan<double> y, ReadOnlySpan<double> weights)
    {
        if (x.Length != y.Length || (!weights.IsEmpty && weights.Length != x.Length))
        {
            throw new ArgumentException("x, y and weights must have the same length");
        }

        var n = x.Length;
        if (n < 5)
        {
            return null;
        }

        // Conditioning: centre on the weighted mean and scale to unit RMS radius (affects only the arithmetic).
        double sw = 0, mx = 0, my = 0;
        for (var i = 0; i < n; i++)
        {
            var w = weights.IsEmpty ? 1.0 : weights[i];
            sw += w;
            mx += w * x[i];
            my += w * y[i];
        }

        if (!(sw > 0))
        {
            return null;
        }

        mx /= sw;
        my /= sw;
        var ss = 0.0;
        for (var i = 0; i < n; i++)
        {
            var w = weights.IsEmpty ? 1.0 : weights[i];
            ss += w * (Sq(x[i] - mx) + Sq(y[i] - my));
        }

        var scale = Math.Sqrt(ss / sw);
        if (!(scale > 0) || !double.IsFinite(scale))
        {
            return null;
        }

        // Scatter matrix S = Dᵀ W D (6×6), accumulated directly.
        var s = new double[6, 6];
        Span<double> d = stackalloc double[6];
        for (var i = 0; i < n; i++)
        {
            var w = weights.IsEmpty ? 1.0 : weights[i];
            if (w == 0)
            {
                continue;
            }

            var u = (x[i] - mx) / scale;
            var v = (y[i] - my) / scale;
            d[0] = u * u;
            d[1] = u * v;
            d[2] = v * v;
            d[3] = u;
            d[4] = v;
            d[5] = 1;
            for (var r = 0; r < 6; r++)
            {
                for (var c = r; c < 6; c++)
                {
                    s[r, c] += w * d[r] * d[c];
                }
            }
        }

        for (var r = 0; r < 6; r++)
        {
            for (var c = 0; c < r; c++)
            {
                s[r, c] = s[c, r];
            }
        }

        var m = Matrix<double>.Build;
        var s1 = m.Dense(3, 3, (r, c) => s[r, c]);
        var s2 = m.Dense(3, 3, (r, c) => s[r, c + 3]);
        var s3 = m.Dense(3, 3, (r, c) => s[r + 3, c + 3]);
        if (Math.Abs(s3.Determinant()) < 1e-14 * Math.Pow(s3.FrobeniusNorm(), 3))
        {
            return null;
        }

        var t = -s3.Solve(s2.Transpose());          // linear part a₂ = T a₁
        var reduced = s1 + (s2 * t);
        // Premultiply by C₁⁻¹ for C₁ = [[0,0,2],[0,−1,0],[2,0,0]].
        var mm = m.Dense(3, 3);
        for (var c = 0; c < 3; c++)
        {
            mm[0, c] = reduced[2, c] / 2;
            mm[1, c] = -reduced[1, c];
            mm[2, c] = reduced[0, c] / 2;
        }

        if (!mm.Enumerate().All(double.IsFinite))
        {
            return null;
        }

        var evd = mm.Evd();
        Vector<double>? a1 = null;
        var bestCond = 0.0;
        for (var k = 0; k < 3; k++)
        {
            if (Math.Abs(evd.EigenValues[k].Imaginary) > 1e-12 * (1 + Math.Abs(evd.EigenValues[k].Real)))
            {
                continue;
            }

            var v = evd.EigenVectors.Column(k);
            var cond = (4 * v[0] * v[2]) - (v[1] * v[1]);
            if (cond > bestCond)
            {
                bestCond = cond;
                a1 = v;
            }
        }

        if (a1 is null)
        {
            return null;
        }

        var a2 = t * a1;
        // Undo the conditioning: u = (x − mx)/k, v = (y − my)/k.
        var (a, b, c0) = (a1[0], a1[1], a1[2]);
        var (dd, ee, ff) = (a2[0], a2[1], a2[2]);
        var k2 = scale * scale;
        var A = a / k2;
        var B = b / k2;
        var C = c0 / k2;
        var D = (dd / scale) - (2 * A * mx) - (B * my);
        var E = (ee / scale) - (2 * C * my) - (B * mx);
        var F = ff + (A * mx * mx) + (B * mx * my) + (C * my * my) - (dd / scale * mx) - (ee / scale * my);
        return FromConic([A, B, C, D, E, F]);
    }

    /// <summary>The ellipse of a conic a x² + b xy + c y² + d x + e y + f = 0; null when it is not a real ellipse.</summary>
    public static Ellipse? FromConic(double[] conic)
    {
        ArgumentNullException.ThrowIfNull(conic);
        var sign = conic[0] + conic[2] < 0 ? -1.0 : 1.0;
        var (a, b, c, d, e, f) = (sign * conic[0], sign * conic[1], sign * conic[2], sign * conic[3], sign * conic[4], sign * conic[5]);
        var det = (4 * a * c) - (b * b);
        if (!(det > 0))
        {
            return null;
        }

        var x0 = ((b * e) - (2 * c * d)) / det;
        var y0 = ((b * d) - (2 * a * e)) / det;
        var f0 = (a * x0 * x0) + (b * x0 * y0) + (c * y0 * y0) + (d * x0) + (e * y0) + f;
        // (p − p₀)ᵀ Q (p − p₀) = −f₀ with Q = [[a, b/2], [b/2, c]].
        var mean = 0.5 * (a + c);
        var diff = 0.5 * (a - c);
        var root = Math.Sqrt((diff * diff) + (b * b / 4));
        var l1 = mean + root;   // larger eigenvalue ↔ minor axis (when scaled to −f₀ > 0)
        var l2 = mean - root;
        if (!(-f0 / l1 > 0) || !(-f0 / l2 > 0))
        {
            return null;
        }

        var major = Math.Sqrt(-f0 / l2);
        var minor = Math.Sqrt(-f0 / l1);
        // Eigenvector of the smaller eigenvalue l2 gives the major axis: angle φ with tan 2φ = b/(a − c).
        var tilt = 0.5 * Math.Atan2(-b, c - a);
        if (tilt <= -Math.PI / 2)
        {
            tilt += Math.PI;
        }

        var norm = Math.Sqrt(conic.Sum(q => q * q));
        double[] unit = [.. conic.Select(q => sign * q / norm)];
        if (!double.IsFinite(major) || !double.IsFinite(minor) || !double.IsFinite(x0) || !double.IsFinite(y0))
        {
            return null;
        }

        return new Ellipse(x0, y0, major, minor, tilt, unit);
    }

    private static double Sq(double v) => v * v;
}
