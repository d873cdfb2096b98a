using NormalFormFit.Field;
using NormalFormFit.Numerics;

namespace NormalFormFit.Bottleneck;

/// <summary>Options of the bottleneck fit.</summary>
public sealed record BottleneckOptions
{
    /// <summary>Half-width of the fit window in units of the bottleneck width √(a/b).</summary>
    public double WidthsPerHalfWindow { get; init; } = 1.5;

    /// <summary>Smallest half-width (radians): below it noise dominates the curvature.</summary>
    public double MinHalfWidth { get; init; } = 0.1;

    /// <summary>Largest half-width (radians).</summary>
    public double MaxHalfWidth { get; init; } = Math.PI / 2;

    /// <summary>Bootstrap replicates over whole revolutions.</summary>
    public int BootstrapReplicates { get; init; } = 400;

    /// <summary>
    /// Whether the cubic and quartic Taylor terms of the field, estimated on a window twice as wide, are taken out
    /// before the parabola fit (<see cref="TaylorRemainder"/>); without it a is biased by about q₄w⁴ ∝ a².
    /// </summary>
    public bool RemoveTaylorRemainder { get; init; } = true;

    /// <summary>Seed of the bootstrap draws.</summary>
    public int Seed { get; init; } = 7;

    /// <summary>Defaults.</summary>
    public static BottleneckOptions Default { get; } = new();
}

/// <summary>
/// Finds the bottleneck (slowest phase) and fits θ̇ ≈ a + b(θ−θ*)² there.
/// </summary>
/// <remarks>
/// Weighted least squares of c₀ + c₁x + c₂x² on samples with |x| ≤ w, x = θ − θ₀, each sample weighted by the
/// phase it covers; then b = c₂, θ* = θ₀ − c₁/(2c₂), a = c₀ − c₁²/(4c₂) (vertex of the parabola). The
/// half-width w follows the bottleneck's own width, w = k√(a/b) (iterated): a narrow window is noisy, and any window
/// biases a by the field's Taylor terms beyond the parabola (order q₄w⁴ ∝ a², which bends the trend of a across μ);
/// those terms are estimated on a window twice as wide and removed first (<see cref="TaylorRemainder"/>). Standard errors: bootstrap over
/// whole revolutions of per-revolution sufficient statistics (O(B·R) after one O(n) pass). Needs samples
/// on both sides of θ* in at least two revolutions.
/// </remarks>
public static class BottleneckLocator
{
    private const int Stats = 9;

    /// <summary>Fits the bottleneck, starting from the slowest bin of <paramref name="field"/>.</summary>
    /// <returns>The fit, or null when no parabola opening upward fits (no bottleneck).</returns>
    public static BottleneckFit? Locate(
        ReadOnlySpan<double> phase,
        ReadOnlySpan<double> velocity,
        ReadOnlySpan<double> phaseWeight,
        ReadOnlySpan<int> revolution,
        int revolutions,
        PhaseField field,
        BottleneckOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(field);
        options ??= BottleneckOptions.Default;
        var centre = SlowestPhase(field);
        if (double.IsNaN(centre))
        {
            return null;
        }

        var w = Math.Min(options.MaxHalfWidth, Math.PI / 4);
        double[] total = [];
        double[] perRev = [];
        Vertex vertex = default;
        for (var iter = 0; iter < 8; iter++)
        {
            perRev = Accumulate(phase, velocity, phaseWeight, revolution, revolutions, centre, w);
            total = Sum(perRev, null, revolutions);
            if (!TrySolve(total, w, out vertex) || !(vertex.B > 0))
            {
                return null;
            }

            centre = RevolutionBlocks.Wrap(centre + vertex.Shift);
            var width = vertex.A > 0 ? Math.Sqrt(vertex.A / vertex.B) : 0.0;
            var next = Math.Clamp(options.WidthsPerHalfWindow * width, options.MinHalfWidth, options.MaxHalfWidth);
            var converged = Math.Abs(next - w) < 0.02 * w && Math.Abs(vertex.Shift) < 0.01 * w;
            w = next;
            if (converged)
            {
                break;
            }
        }

        // Final pass centred on θ*, window fixed: point estimate and bootstrap.
        perRev = Accumulate(phase, velocity, phaseWeight, revolution, revolutions, centre, w);
        total = Sum(perRev, null, revolutions);
        var wideWidth = TaylorRemainder.WideHalfWidth(w, options.MaxHalfWidth);
        var wide = options.RemoveTaylorRemainder ? TaylorRemainder.AccumulateWide(phase, velocity, phaseWeight, revolution, revolutions, centre, wideWidth) : [];
        var high = options.RemoveTaylorRemainder ? TaylorRemainder.AccumulateHigh(phase, phaseWeight, revolution, revolutions, centre, w) : [];
        double[] Corrected(double[] sums, int[]? draw) =>
            options.RemoveTaylorRemainder
            && TaylorRemainder.TryHigherTerms(TaylorRemainder.Sum(wide, TaylorRemainder.WideStats, draw, revolutions), wideWidth) is { } q
                ? TaylorRemainder.Remove(sums, TaylorRemainder.Sum(high, TaylorRemainder.HighStats, draw, revolutions), w, q)
                : sums;

        if (!TrySolve(total, w, out var plain) || !(plain.B > 0))
        {
            return null;
        }

        var samples = (int)total[Stats];
        var rms = ResidualRms(total, w);

        // The check compares the plain parabola fits on the window and its half, as before any correction.
        var half = Accumulate(phase, velocity, phaseWeight, revolution, revolutions, RevolutionBlocks.Wrap(centre + plain.Shift), w / 2);
        var quartic = TrySolve(Sum(half, null, revolutions), w / 2, out var narrow) ? plain.A - narrow.A : double.NaN;

        // Bootstrap standard errors of (a, b, shift), the correction redone in each replicate; NaN when more than a
        // tenth of the replicates give no parabola opening upward.
        (double A, double B, double Shift) Bootstrap(bool correct)
        {
            if (revolutions < 2)
            {
                return (double.NaN, double.NaN, double.NaN);
            }

            var rng = new Random(options.Seed);
            var draw = new int[revolutions];
            var a = new List<double>(options.BootstrapReplicates);
            var b = new List<double>(options.BootstrapReplicates);
            var s = new List<double>(options.BootstrapReplicates);
            for (var r = 0; r < options.BootstrapReplicates; r++)
            {
                Array.Clear(draw);
                for (var k = 0; k < revolutions; k++)
                {
                    draw[rng.Next(revolutions)]++;
                }

                var sums = Sum(perRev, draw, revolutions);
                if (TrySolve(correct ? Corrected(sums, draw) : sums, w, out var v) && v.B > 0)
                {
                    a.Add(v.A);
                    b.Add(v.B);
                    s.Add(v.Shift);
                }
            }

            return a.Count >= 0.9 * options.BootstrapReplicates
                ? (SampleStatistics.StandardDeviation(a), SampleStatistics.StandardDeviation(b), SampleStatistics.StandardDeviation(s))
                : (double.NaN, double.NaN, double.NaN);
        }

        // The corrected fit when it is determined (its parabola opens upward in the data and in nine replicates of
        // ten); otherwise the plain one: with few, noisy revolutions the degree-6 fit can be unstable (phase diffusion
        // near onset), and then the correction would add noise, not remove bias.
        vertex = plain;
        var se = (A: double.NaN, B: double.NaN, Shift: double.NaN);
        if (options.RemoveTaylorRemainder && TrySolve(Corrected(total, null), w, out var corrected) && corrected.B > 0)
        {
            se = Bootstrap(true);
            vertex = double.IsNaN(se.A) ? plain : corrected;
        }

        if (double.IsNaN(se.A))
        {
            se = Bootstrap(false);
        }

        var (seA, seB, seShift) = se;
        var theta = RevolutionBlocks.Wrap(centre + vertex.Shift);
        return new BottleneckFit(
            new Estimate(theta, seShift),
            new Estimate(vertex.A, seA),
            new Estimate(vertex.B, seB),
            w,
            samples,
            rms,
            quartic)
        {
            Residuals = BinResiduals(phase, velocity, phaseWeight, revolution, revolutions, theta, w, vertex.A, vertex.B),
        };
    }

    /// <summary>
    /// Time-weighted mean residual of θ̇ about a + b(θ−θ*)² in equal bins of θ − θ* over the window; standard error
    /// from the spread of per-revolution bin means (revolutions are the independent blocks, as in the bootstrap). O(n).
    /// </summary>
    internal static ResidualBin[] BinResiduals(
        ReadOnlySpan<double> phase,
        ReadOnlySpan<double> velocity,
        ReadOnlySpan<double> weight,
        ReadOnlySpan<int> revolution,
        int revolutions,
        double theta,
        double w,
        double a,
        double b,
        int bins = 15)
    {
        var sw = new double[revolutions * bins];
        var swr = new double[revolutions * bins];
        var count = new int[bins];
        for (var i = 0; i < phase.Length; i++)
        {
            var x = RevolutionBlocks.WrapSigned(phase[i] - theta);
            if (Math.Abs(x) > w)
            {
                continue;
            }

            var k = Math.Min((int)((x + w) / (2 * w) * bins), bins - 1);
            var o = (revolution[i] * bins) + k;
            sw[o] += weight[i];
            swr[o] += weight[i] * (velocity[i] - (a + (b * x * x)));
            count[k]++;
        }

        var result = new List<ResidualBin>(bins);
        var perRev = new List<double>(revolutions);
        for (var k = 0; k < bins; k++)
        {
            double tw = 0, twr = 0;
            perRev.Clear();
            for (var r = 0; r < revolutions; r++)
            {
                var o = (r * bins) + k;
                tw += sw[o];
                twr += swr[o];
                if (sw[o] > 0)
                {
                    perRev.Add(swr[o] / sw[o]);
                }
            }

            if (!(tw > 0))
            {
                continue;
            }

            var se = SampleStatistics.StandardErrorOfMean(perRev);
            result.Add(new ResidualBin(-w + ((k + 0.5) * 2 * w / bins), twr / tw, se, count[k]));
        }

        return [.. result];
    }

    /// <summary>Slowest phase of the field, refined by a parabola through the slowest bin and its neighbours.</summary>
    internal static double SlowestPhase(PhaseField field)
    {
        var v = field.Velocity;
        var m = v.Length;
        var j = -1;
        for (var i = 0; i < m; i++)
        {
            if (double.IsFinite(v[i]) && (j < 0 || v[i] < v[j]))
            {
                j = i;
            }
        }

        if (j < 0)
        {
            return double.NaN;
        }

        var l = v[(j - 1 + m) % m];
        var r = v[(j + 1) % m];
        var denom = l - (2 * v[j]) + r;
        var offset = double.IsFinite(l) && double.IsFinite(r) && denom > 0 ? 0.5 * (l - r) / denom : 0.0;
        return RevolutionBlocks.Wrap(field.Centres[j] + (Math.Clamp(offset, -0.5, 0.5) * field.BinWidth));
    }

    private readonly record struct Vertex(double A, double B, double Shift, double C0, double C1, double C2);

    // Per revolution: Σw, Σwu, Σwu², Σwu³, Σwu⁴, Σwy, Σwuy, Σwu²y, Σwy², count; u = x/w scaled for conditioning.
    private static double[] Accumulate(
        ReadOnlySpan<double> phase,
        ReadOnlySpan<double> velocity,
        ReadOnlySpan<double> weight,
        ReadOnlySpan<int> revolution,
        int revolutions,
        double centre,
        double w)
    {
        var s = new double[revolutions * (Stats + 1)];
        for (var i = 0; i < phase.Length; i++)
        {
            var x = RevolutionBlocks.WrapSigned(phase[i] - centre);
            if (Math.Abs(x) > w)
            {
                continue;
            }

            var u = x / w;
            var y = velocity[i];
            var wt = weight[i];
            var o = revolution[i] * (Stats + 1);
            var u2 = u * u;
            s[o] += wt;
            s[o + 1] += wt * u;
            s[o + 2] += wt * u2;
            s[o + 3] += wt * u2 * u;
            s[o + 4] += wt * u2 * u2;
            s[o + 5] += wt * y;
            s[o + 6] += wt * u * y;
            s[o + 7] += wt * u2 * y;
            s[o + 8] += wt * y * y;
            s[o + 9] += 1;
        }

        return s;
    }

    private static double[] Sum(double[] perRev, int[]? multiplicity, int revolutions)
    {
        var t = new double[Stats + 1];
        for (var r = 0; r < revolutions; r++)
        {
            var c = multiplicity is null ? 1 : multiplicity[r];
            if (c == 0)
            {
                continue;
            }

            var o = r * (Stats + 1);
            for (var k = 0; k <= Stats; k++)
            {
                t[k] += c * perRev[o + k];
            }
        }

        return t;
    }

    private static bool TrySolve(double[] s, double w, out Vertex vertex)
    {
        vertex = default;
        if (s[Stats] < 5)
        {
            return false;
        }

        // Normal equations [[S0 S1 S2][S1 S2 S3][S2 S3 S4]] c = [Y0 Y1 Y2], solved by Cramer's rule (3×3).
        double a11 = s[0], a12 = s[1], a13 = s[2], a22 = s[2], a23 = s[3], a33 = s[4];
        double r1 = s[5], r2 = s[6], r3 = s[7];
        var det = (a11 * ((a22 * a33) - (a23 * a23))) - (a12 * ((a12 * a33) - (a23 * a13))) + (a13 * ((a12 * a23) - (a22 * a13)));
        if (!(Math.Abs(det) > 1e-300) || !double.IsFinite(det))
        {
            return false;
        }

        var c0 = ((r1 * ((a22 * a33) - (a23 * a23))) - (a12 * ((r2 * a33) - (a23 * r3))) + (a13 * ((r2 * a23) - (a22 * r3)))) / det;
        var c1 = ((a11 * ((r2 * a33) - (a23 * r3))) - (r1 * ((a12 * a33) - (a23 * a13))) + (a13 * ((a12 * r3) - (r2 * a13)))) / det;
        var c2 = ((a11 * ((a22 * r3) - (r2 * a23))) - (a12 * ((a12 * r3) - (r2 * a13))) + (r1 * ((a12 * a23) - (a22 * a13)))) / det;

        // Back from u = x/w to x.
        var b1 = c1 / w;
        var b2 = c2 / (w * w);
        if (!(b2 > 0))
        {
            vertex = new Vertex(double.NaN, b2, 0, c0, c1, c2);
            return true;
        }

        var shift = -b1 / (2 * b2);
        if (Math.Abs(shift) > w)
        {
            // The vertex lies outside the window: move toward it without trusting the extrapolation.
            shift = Math.Sign(shift) * w / 2;
        }

        vertex = new Vertex(c0 - (b1 * b1 / (4 * b2)), b2, shift, c0, c1, c2);
        return double.IsFinite(vertex.A);
    }

    private static double ResidualRms(double[] s, double w)
    {
        if (!TrySolve(s, w, out var v) || s[0] <= 0)
        {
            return double.NaN;
        }

        // Σw(y − c·u)² = Σwy² − 2c·Y + cᵀSc.
        double c0 = v.C0, c1 = v.C1, c2 = v.C2;
        var fit = (c0 * s[5]) + (c1 * s[6]) + (c2 * s[7]);
        var quad = (c0 * c0 * s[0]) + (2 * c0 * c1 * s[1]) + (((2 * c0 * c2) + (c1 * c1)) * s[2]) + (2 * c1 * c2 * s[3]) + (c2 * c2 * s[4]);
        var rss = s[8] - (2 * fit) + quad;
        return Math.Sqrt(Math.Max(rss, 0) / s[0]);
    }
}
