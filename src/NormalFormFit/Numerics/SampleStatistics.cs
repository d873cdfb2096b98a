namespace NormalFormFit.Numerics;

/// <summary>
/// The sample standard deviation s = √(Σ(xᵢ − x̄)²/(n − 1)) (Bessel's correction) and the standard error of the
/// mean s/√n (any statistics text, e.g. Taylor, An Introduction to Error Analysis, 2nd ed., 1997, §4.2 and §4.4).
/// </summary>
/// <remarks>
/// <see cref="StandardDeviation"/> takes two passes (mean, then squared deviations), which keeps the digits that the
/// one-pass formula Σx² − (Σx)²/n loses when the mean is large against the spread (Chan, Golub &amp; LeVeque 1983);
/// <see cref="StandardDeviationFromSums"/> is that one-pass formula for sums kept in a running loop. Need two values;
/// NaN otherwise. O(n).
/// </remarks>
internal static class SampleStatistics
{
    /// <summary>The sample standard deviation (n − 1 in the denominator); NaN for fewer than two values.</summary>
    public static double StandardDeviation(IReadOnlyList<double> xs)
    {
        ArgumentNullException.ThrowIfNull(xs);
        if (xs.Count < 2)
        {
            return double.NaN;
        }

        var mean = xs.Average();
        var ss = 0.0;
        foreach (var x in xs)
        {
            ss += (x - mean) * (x - mean);
        }

        return Math.Sqrt(ss / (xs.Count - 1));
    }

    /// <summary>The standard error of the mean, s/√n; NaN for fewer than two values.</summary>
    public static double StandardErrorOfMean(IReadOnlyList<double> xs)
    {
        ArgumentNullException.ThrowIfNull(xs);
        return StandardDeviation(xs) / Math.Sqrt(xs.Count);
    }

    /// <summary>
    /// The sample standard deviation from running sums, √(max(0, (Σx² − (Σx)²/n)/(n − 1))); NaN for fewer than two
    /// values. Use only when the values are not kept and the mean is not large against the spread.
    /// </summary>
    public static double StandardDeviationFromSums(double sum, double sumOfSquares, int count) =>
        count >= 2 ? Math.Sqrt(Math.Max(0, (sumOfSquares - (sum * sum / count)) / (count - 1))) : double.NaN;

    /// <summary>The median (middle value, or mean of the two middle values); NaN when empty. Leaves the values as they are. O(n log n).</summary>
    public static double Median(ReadOnlySpan<double> xs)
    {
        var copy = xs.ToArray();
        return MedianInPlace(copy);
    }

    /// <summary>The median, sorting <paramref name="xs"/> in place; NaN when empty.</summary>
    public static double MedianInPlace(Span<double> xs)
    {
        if (xs.IsEmpty)
        {
            return double.NaN;
        }

        xs.Sort();
        var m = xs.Length / 2;
        return xs.Length % 2 == 1 ? xs[m] : 0.5 * (xs[m - 1] + xs[m]);
    }

    /// <summary>
    /// The median by selection, reordering <paramref name="xs"/> (not sorting it); NaN when empty. Hoare's FIND
    /// (Hoare 1961, "Algorithm 65: Find", Comm. ACM 4:321) with the median of three as pivot: O(n) expected, against
    /// O(n log n) for a sort; the same value as <see cref="MedianInPlace"/>.
    /// </summary>
    public static double MedianBySelection(Span<double> xs)
    {
        if (xs.IsEmpty)
        {
            return double.NaN;
        }

        var m = xs.Length / 2;
        var upper = Select(xs, m);
        if (xs.Length % 2 == 1)
        {
            return upper;
        }

        // The lower middle is the largest of the elements left of m (all ≤ xs[m] after the selection).
        var lower = double.NegativeInfinity;
        foreach (var x in xs[..m])
        {
            lower = Math.Max(lower, x);
        }

        return 0.5 * (lower + upper);
    }

    /// <summary>The k-th smallest element (0-based): afterwards xs[k] holds it, everything left of k is ≤ it and everything right ≥ it.</summary>
    private static double Select(Span<double> xs, int k)
    {
        int lo = 0, hi = xs.Length - 1;
        while (hi > lo)
        {
            var mid = lo + ((hi - lo) / 2);
            if (xs[mid] < xs[lo])
            {
                (xs[mid], xs[lo]) = (xs[lo], xs[mid]);
            }

            if (xs[hi] < xs[lo])
            {
                (xs[hi], xs[lo]) = (xs[lo], xs[hi]);
            }

            if (xs[hi] < xs[mid])
            {
                (xs[hi], xs[mid]) = (xs[mid], xs[hi]);
            }

            var pivot = xs[mid];
            int i = lo, j = hi;
            while (i <= j)
            {
                while (xs[i] < pivot)
                {
                    i++;
                }

                while (pivot < xs[j])
                {
                    j--;
                }

                if (i <= j)
                {
                    (xs[i], xs[j]) = (xs[j], xs[i]);
                    i++;
                    j--;
                }
            }

            if (k <= j)
            {
                hi = j;
            }
            else if (k >= i)
            {
                lo = i;
            }
            else
            {
                break;
            }
        }

        return xs[k];
    }
}
