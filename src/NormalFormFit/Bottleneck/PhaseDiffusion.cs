using NormalFormFit.Field;
using NormalFormFit.Numerics;

namespace NormalFormFit.Bottleneck;

/// <summary>Phase-diffusion strength of a run and what it does to the bottleneck passage.</summary>
/// <param name="Diffusion">D of dθ = f dt + √(2D) dW (rad² per time unit), with standard error.</param>
/// <param name="MeasurementSd">σ of the white measurement noise on the phase (rad), from the same fit.</param>
/// <param name="PassageRatio">
/// Mean passage time through the bottleneck with this D over the deterministic π/√(ab) (1 = no effect; NaN when the
/// run has no bottleneck).
/// </param>
/// <param name="NoiseDominated">True when D is significantly above zero and shortens the passage by more than
/// <see cref="PhaseDiffusion.DominanceThreshold"/>.</param>
public sealed record NoiseEstimate(Estimate Diffusion, double MeasurementSd, double PassageRatio, bool NoiseDominated);

/// <summary>Estimates phase diffusion from the raw phase and its effect on the bottleneck passage.</summary>
public static class PhaseDiffusion
{
    /// <summary>A run is noise-dominated when noise shortens the bottleneck passage by more than this fraction.</summary>
    public const double DominanceThreshold = 0.1;

    private const int MaxLag = 4;
    private const int Blocks = 8;

    /// <summary>
    /// Variance of the lag-k second difference r = θ(t+kΔ) − 2θ(t) + θ(t−kΔ) − f f′(kΔ)² is 4DkΔ + 6σ² for a phase
    /// diffusing with strength D (independent Wiener increments, Itô isometry) observed with white noise σ; the drift
    /// term f f′(kΔ)² is removed with the run's field. Weighted least squares of the variance on k = 1…4 gives D and σ;
    /// the standard error of D from eight contiguous blocks (common practice, no source). Assumes near-uniform sampling
    /// (Δ = median step); differences never span a gap, nor missing samples (a lag that is not kΔ within Δ/2). O(n).
    /// </summary>
    public static NoiseEstimate? Estimate(ReadOnlySpan<double> time, ReadOnlySpan<double> rawPhase, ReadOnlySpan<int> segmentStarts, PhaseField? field, BottleneckFit? bottleneck)
    {
        var n = time.Length;
        if (n < 16 * Blocks)
        {
            return null;
        }

        var steps = new double[n - 1];
        for (var i = 1; i < n; i++)
        {
            steps[i - 1] = time[i] - time[i - 1];
        }

        Array.Sort(steps);
        var dt = steps[steps.Length / 2];
        if (!(dt > 0))
        {
            return null;
        }

        var segEnd = new int[n];
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : n;
            for (var i = s; i < e; i++)
            {
                segEnd[i] = e;
            }
        }

        var segStart = new int[n];
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : n;
            for (var i = s; i < e; i++)
            {
                segStart[i] = s;
            }
        }

        // Per block and lag: sum of r² and count.
        var sums = new double[Blocks, MaxLag + 1];
        var counts = new long[Blocks, MaxLag + 1];
        var blockLen = (n + Blocks - 1) / Blocks;
        var h = field is null ? 0.0 : field.BinWidth;
        for (var i = 0; i < n; i++)
        {
            var drift = 0.0;
            if (field is not null)
            {
                var th = rawPhase[i];
                var f = field.Interpolate(th);
                var fp = (field.Interpolate(th + h) - field.Interpolate(th - h)) / (2 * h);
                drift = double.IsFinite(f) && double.IsFinite(fp) ? f * fp : 0.0;
            }

            var block = Math.Min(i / blockLen, Blocks - 1);
            for (var k = 1; k <= MaxLag; k++)
            {
                if (i - k < segStart[i] || i + k >= segEnd[i])
                {
                    continue;
                }

                // Missing samples (dropped frames, blank rows) do not split a run: a difference across them would not
                // have the lag kΔ the variance formula assumes, so it is skipped.
                var lag = k * dt;
                if (Math.Abs(time[i + k] - time[i] - lag) > 0.5 * dt || Math.Abs(time[i] - time[i - k] - lag) > 0.5 * dt)
                {
                    continue;
                }

                var r = rawPhase[i + k] - (2 * rawPhase[i]) + rawPhase[i - k] - (drift * lag * lag);
                sums[block, k] += r * r;
                counts[block, k]++;
            }
        }

        var perBlock = new List<double>();
        for (var b = 0; b < Blocks; b++)
        {
            var (d, _) = Regress(b, b + 1, sums, counts, dt);
            if (double.IsFinite(d))
            {
                perBlock.Add(d);
            }
        }

        var (dAll, sigma2) = Regress(0, Blocks, sums, counts, dt);
        if (!double.IsFinite(dAll) || perBlock.Count < 3)
        {
            return null;
        }

        var se = SampleStatistics.StandardErrorOfMean(perBlock);
        var diffusion = new Estimate(dAll, se);
        var ratio = double.NaN;
        if (bottleneck is { } bn && bn.A.Value > 0 && bn.B.Value > 0 && dAll > 0)
        {
            ratio = PassageRatio(bn.A.Value, bn.B.Value, dAll);
        }

        var dominated = double.IsFinite(ratio) && ratio < 1 - DominanceThreshold && dAll > 2 * se;
        return new NoiseEstimate(diffusion, Math.Sqrt(Math.Max(sigma2, 0)), ratio, dominated);
    }

    /// <summary>
    /// Mean first-passage time of dx = (a + bx²)dt + √(2D)dW across the bottleneck, over π/√(ab).
    /// MFPT from a reflecting edge at −L to an absorbing edge at +L: T = (1/D)∫₋ₗᴸ dx ∫₋ₗˣ e^((U(x) − U(y))/D) dy,
    /// U′ = −f (Gardiner, Handbook of Stochastic Methods, §5.2.7); the inner integral J solves J′ = 1 − (f/D)J,
    /// stepped exactly for piecewise-constant f. The outer parts |x| &gt; L, where noise is negligible, add 2/(bL).
    /// L = 20 max(√(a/b), (D/b)^(1/3)); 8000 steps. Near-onset noise shortens the passage (Sigeti &amp; Horsthemke 1989).
    /// </summary>
    public static double PassageRatio(double a, double b, double d)
    {
        if (!(a > 0 && b > 0 && d > 0))
        {
            return double.NaN;
        }

        var l = 20 * Math.Max(Math.Sqrt(a / b), Math.Cbrt(d / b));
        const int steps = 8000;
        var step = 2 * l / steps;
        var j = 0.0;
        var integral = 0.0;
        for (var i = 0; i < steps; i++)
        {
            var xm = -l + ((i + 0.5) * step);
            var g = (a + (b * xm * xm)) / d;
            var jNext = g * step > 1e-8
                ? (j * Math.Exp(-g * step)) + ((1 - Math.Exp(-g * step)) / g)
                : j + step;
            integral += 0.5 * (j + jNext) * step;
            j = jNext;
        }

        var passage = (integral / d) + (2 / (b * l));
        return passage / (Math.PI / Math.Sqrt(a * b));
    }

    // Weighted least squares of mean r² on [1, k] over blocks [from, to): slope 4DΔ, intercept 6σ².
    private static (double D, double Sigma2) Regress(int from, int to, double[,] sums, long[,] counts, double dt)
    {
        double sw = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
        for (var k = 1; k <= MaxLag; k++)
        {
            double s = 0;
            long c = 0;
            for (var b = from; b < to; b++)
            {
                s += sums[b, k];
                c += counts[b, k];
            }

            if (c < 8)
            {
                return (double.NaN, double.NaN);
            }

            var v = s / c;
            if (!(v > 0))
            {
                return (0, 0);
            }

            // Var of a sample variance ≈ 2v²/c: weights c/v².
            var w = c / (v * v);
            sw += w;
            sx += w * k;
            sy += w * v;
            sxx += w * k * k;
            sxy += w * k * v;
        }

        var det = (sw * sxx) - (sx * sx);
        var slope = ((sw * sxy) - (sx * sy)) / det;
        var intercept = (sy - (slope * sx)) / sw;
        return (slope / (4 * dt), intercept / 6);
    }
}
