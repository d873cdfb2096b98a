using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Field;

namespace NormalFormFit.Bottleneck;

/// <summary>
/// The cubic and quartic Taylor terms of the field at the bottleneck, estimated on a wider window, and their
/// removal from the parabola fit's right-hand side.
/// </summary>
/// <remarks>
/// A parabola c₀ + c₁x + c₂x² fitted by least squares over |x| ≤ w to a field with Taylor terms q₃x³ + q₄x⁴
/// has E[ĉ] = c + S⁻¹ΔY, ΔYⱼ = Σ wᵢxᵢʲ(q₃xᵢ³ + q₄xᵢ⁴): the omitted-variable bias of least squares (Seber &amp; Lee,
/// Linear Regression Analysis, 2nd ed., 2003, §9.2). With w ∝ √(a/b) the vertex value a is biased by about
/// q₄w⁴·const ∝ a², which bends the trend of a across μ and moves its root (for θ̇ = μ − sin θ, q₄ = −1/24 and
/// â ≈ a + 0.055a² with the time weights of the fit). Here q₃ and q₄ come from a quartic fitted over the wider
/// window |x| ≤ W = 2w (capped at π/2) and are subtracted from the observations before the parabola fit, so the
/// remaining bias is of order q₅w⁵, q₆w⁶ and the correction's own noise is carried by the bootstrap (it is redone
/// in each replicate). O(n) per window after which everything is per-revolution sums.
/// </remarks>
internal static class TaylorRemainder
{
    /// <summary>Degree of the polynomial fitted on the wide window; its terms x³ … x^Degree are removed.</summary>
    internal const int Degree = 6;

    /// <summary>Per-revolution sums of the wide window: Σw·uᵏ (k = 0..2·Degree), Σw·uᵏ·y (k = 0..Degree), count.</summary>
    internal const int WideStats = (2 * Degree) + 1 + Degree + 1 + 1;

    /// <summary>Per-revolution sums of the fit window beyond those of the parabola: Σw·uᵏ, k = 5..Degree + 2.</summary>
    internal const int HighStats = Degree - 2;

    private const int Moments = (2 * Degree) + 1;

    /// <summary>Half-width of the window the Taylor terms are estimated on.</summary>
    internal static double WideHalfWidth(double w, double maxHalfWidth) => Math.Max(w, Math.Min(2 * w, maxHalfWidth));

    internal static double[] AccumulateWide(
        ReadOnlySpan<double> phase, ReadOnlySpan<double> velocity, ReadOnlySpan<double> weight, ReadOnlySpan<int> revolution, int revolutions, double centre, double halfWidth)
    {
        var s = new double[revolutions * WideStats];
        Span<double> pw = stackalloc double[Moments];
        for (var i = 0; i < phase.Length; i++)
        {
            var x = RevolutionBlocks.WrapSigned(phase[i] - centre);
            if (Math.Abs(x) > halfWidth)
            {
                continue;
            }

            var u = x / halfWidth;
            var o = revolution[i] * WideStats;
            pw[0] = weight[i];
            for (var k = 1; k < Moments; k++)
            {
                pw[k] = pw[k - 1] * u;
            }

            for (var k = 0; k < Moments; k++)
            {
                s[o + k] += pw[k];
            }

            for (var k = 0; k <= Degree; k++)
            {
                s[o + Moments + k] += pw[k] * velocity[i];
            }

            s[o + WideStats - 1] += 1;
        }

        return s;
    }

    internal static double[] AccumulateHigh(
        ReadOnlySpan<double> phase, ReadOnlySpan<double> weight, ReadOnlySpan<int> revolution, int revolutions, double centre, double halfWidth)
    {
        var s = new double[revolutions * HighStats];
        for (var i = 0; i < phase.Length; i++)
        {
            var x = RevolutionBlocks.WrapSigned(phase[i] - centre);
            if (Math.Abs(x) > halfWidth)
            {
                continue;
            }

            var u = x / halfWidth;
            var g = weight[i] * u * u * u * u * u;
            for (var k = 0; k < HighStats; k++)
            {
                s[(revolution[i] * HighStats) + k] += g;
                g *= u;
            }
        }

        return s;
    }

    /// <summary>Sums over revolutions, each counted <paramref name="multiplicity"/> times (all once when null).</summary>
    internal static double[] Sum(double[] perRev, int stride, int[]? multiplicity, int revolutions)
    {
        var t = new double[stride];
        for (var r = 0; r < revolutions; r++)
        {
            var c = multiplicity is null ? 1 : multiplicity[r];
            for (var k = 0; c != 0 && k < stride; k++)
            {
                t[k] += c * perRev[(r * stride) + k];
            }
        }

        return t;
    }

    /// <summary>The coefficients of x³ … x^Degree of the weighted polynomial on the wide window; null when it is not determined.</summary>
    internal static double[]? TryHigherTerms(double[] wide, double halfWidth)
    {
        if (wide[WideStats - 1] < 4 * (Degree + 1))
        {
            return null;
        }

        var m = Matrix<double>.Build.Dense(Degree + 1, Degree + 1, (i, j) => wide[i + j]);
        var y = Vector<double>.Build.Dense(Degree + 1, i => wide[Moments + i]);
        var c = m.Svd().Solve(y);
        var q = new double[Degree - 2];
        for (var k = 3; k <= Degree; k++)
        {
            q[k - 3] = c[k] / Math.Pow(halfWidth, k);
            if (!double.IsFinite(q[k - 3]))
            {
                return null;
            }
        }

        return q;
    }

    /// <summary>
    /// The parabola's sums (layout of <see cref="BottleneckLocator"/>: Σw·uᵏ k = 0..4 at 0..4, Σw·uᵏ·y k = 0..2 at
    /// 5..7) with Σₖ qₖxᵏ (k ≥ 3) taken out of y; x = u·w.
    /// </summary>
    internal static double[] Remove(double[] sums, double[] high, double w, double[] q)
    {
        double Moment(int k) => k <= 4 ? sums[k] : high[k - 5];
        var r = (double[])sums.Clone();
        for (var k = 3; k <= Degree; k++)
        {
            var ck = q[k - 3] * Math.Pow(w, k);
            for (var j = 0; j < 3; j++)
            {
                r[5 + j] -= ck * Moment(j + k);
            }
        }

        return r;
    }
}
