using NormalFormFit.Numerics;

namespace NormalFormFit.Field;

/// <summary>Options of the field reconstruction.</summary>
public sealed record FieldOptions
{
    /// <summary>Number of phase bins; 0 chooses from the samples per revolution (16…256).</summary>
    public int Bins { get; init; }

    /// <summary>Bootstrap replicates over whole revolutions.</summary>
    public int BootstrapReplicates { get; init; } = 200;

    /// <summary>Seed of the bootstrap draws (results are reproducible).</summary>
    public int Seed { get; init; } = 20261201;

    /// <summary>Defaults.</summary>
    public static FieldOptions Default { get; } = new();
}

/// <summary>
/// Reconstructs θ̇(θ) on the circle from the smoothed phase and its derivative: phase-weighted means in
/// equal bins (each sample weighted by the phase it covers, so a bin's value is its mean over phase, not
/// over time), uncertainty and the predicted period T = ∮dθ/θ̇ from a block bootstrap over whole
/// revolutions (Künsch 1989 for the moving-block idea; here the blocks are natural: one revolution each).
/// Cost O(n + B·R·M) for n samples, B replicates, R revolutions, M bins.
/// </summary>
public static class PhaseFieldEstimator
{
    /// <summary>Chooses a bin count from the mean number of samples per revolution.</summary>
    public static int ChooseBins(int samples, double revolutions)
    {
        var perRev = samples / Math.Max(revolutions, 1.0);
        var m = (int)Math.Round(perRev / 8.0);
        return Math.Clamp(m, 16, 256);
    }

    /// <summary>Estimates the field. <paramref name="phaseWeight"/> is the phase each sample covers.</summary>
    /// <param name="phase">Smoothed unwrapped phase.</param>
    /// <param name="velocity">Smoothed θ̇ at the same samples.</param>
    /// <param name="phaseWeight">Phase covered by each sample (half the central difference of the phase).</param>
    /// <param name="revolution">Revolution label of each sample (0…revolutions−1).</param>
    /// <param name="revolutions">Number of revolution blocks.</param>
    /// <param name="options">Options.</param>
    public static PhaseField Estimate(
        ReadOnlySpan<double> phase,
        ReadOnlySpan<double> velocity,
        ReadOnlySpan<double> phaseWeight,
        ReadOnlySpan<int> revolution,
        int revolutions,
        FieldOptions? options = null)
    {
        options ??= FieldOptions.Default;
        var m = options.Bins > 0 ? options.Bins : ChooseBins(phase.Length, revolutions);
        var width = 2.0 * Math.PI / m;
        var sums = new double[revolutions * m];
        var weights = new double[revolutions * m];
        for (var i = 0; i < phase.Length; i++)
        {
            var bin = Math.Min((int)(RevolutionBlocks.Wrap(phase[i]) / width), m - 1);
            var k = (revolution[i] * m) + bin;
            sums[k] += velocity[i] * phaseWeight[i];
            weights[k] += phaseWeight[i];
        }

        var centres = new double[m];
        for (var j = 0; j < m; j++)
        {
            centres[j] = (j + 0.5) * width;
        }

        var counts = Enumerable.Repeat(1, revolutions).ToArray();
        var field = Aggregate(sums, weights, counts, m, revolutions);
        var period = PeriodOf(field, width);

        var b = options.BootstrapReplicates;
        var se = new double[m];
        var periodSe = double.NaN;
        if (revolutions >= 2 && b >= 2)
        {
            var rng = new Random(options.Seed);
            var sumV = new double[m];
            var sumV2 = new double[m];
            var nV = new int[m];
            var periods = new List<double>(b);
            var draw = new int[revolutions];
            for (var r = 0; r < b; r++)
            {
                Array.Clear(draw);
                for (var k = 0; k < revolutions; k++)
                {
                    draw[rng.Next(revolutions)]++;
                }

                var f = Aggregate(sums, weights, draw, m, revolutions);
                for (var j = 0; j < m; j++)
                {
                    if (double.IsFinite(f[j]))
                    {
                        sumV[j] += f[j];
                        sumV2[j] += f[j] * f[j];
                        nV[j]++;
                    }
                }

                FillEmpty(f, field);
                var p = PeriodOf(f, width);
                if (double.IsFinite(p))
                {
                    periods.Add(p);
                }
            }

            for (var j = 0; j < m; j++)
            {
                se[j] = SampleStatistics.StandardDeviationFromSums(sumV[j], sumV2[j], nV[j]);
            }

            if (periods.Count >= 0.9 * b)
            {
                periodSe = SampleStatistics.StandardDeviation(periods);
            }
        }
        else
        {
            Array.Fill(se, double.NaN);
        }

        return new PhaseField(centres, field, se, revolutions, new Estimate(period, periodSe));
    }

    private static double[] Aggregate(double[] sums, double[] weights, int[] multiplicity, int m, int revolutions)
    {
        var s = new double[m];
        var w = new double[m];
        for (var r = 0; r < revolutions; r++)
        {
            var c = multiplicity[r];
            if (c == 0)
            {
                continue;
            }

            var o = r * m;
            for (var j = 0; j < m; j++)
            {
                s[j] += c * sums[o + j];
                w[j] += c * weights[o + j];
            }
        }

        for (var j = 0; j < m; j++)
        {
            s[j] = w[j] > 0 ? s[j] / w[j] : double.NaN;
        }

        return s;
    }

    private static void FillEmpty(double[] f, double[] fallback)
    {
        for (var j = 0; j < f.Length; j++)
        {
            if (!double.IsFinite(f[j]))
            {
                f[j] = fallback[j];
            }
        }
    }

    /// <summary>T = ∮dθ/θ̇ by the midpoint rule over the bins; NaN when any bin is empty or θ̇ ≤ 0.</summary>
    internal static double PeriodOf(ReadOnlySpan<double> field, double width)
    {
        var t = 0.0;
        foreach (var v in field)
        {
            if (!(v > 0))
            {
                return double.NaN;
            }

            t += width / v;
        }

        return t;
    }
}
