namespace NormalFormFit.Bottleneck;

/// <summary>Periods measured from the passages of the phase through a reference phase.</summary>
/// <param name="ReferencePhase">The reference phase (radians in [0, 2π)), on the fast side θ* + π.</param>
/// <param name="CrossingTimes">Times of the timed passages through the levels θref + 2πk.</param>
/// <param name="Periods">Single periods: differences of passages through consecutive levels, both timed.</param>
/// <param name="Mean">
/// Mean period: the time spanned by the timed passages of each segment over the revolutions between them (a passage
/// that could not be timed inside a bridged gap does not lose the revolutions on either side). Standard error
/// SD(single periods)/√revolutions (revolutions treated as independent; conservative under pure measurement noise).
/// </param>
/// <param name="Revolutions">Whole revolutions spanned by the timed passages, summed over segments.</param>
/// <param name="LeftOut">Passages inside bridged gaps too wide to time them.</param>
public sealed record PeriodMeasurement(double ReferencePhase, double[] CrossingTimes, double[] Periods, Estimate Mean, int Revolutions, int LeftOut)
{
    /// <summary>
    /// Offsets (radians) from the fast side tried, nearest first, when a passage there falls inside a wide gap (ours). A
    /// reference further from the fast side times each passage with more jitter (δ/θ̇), which the single periods' SD
    /// carries into the standard error; a lost revolution at a segment's end is lost for good.
    /// </summary>
    private static readonly double[] AlternativeOffsets = [0.5, -0.5, 1.0, -1.0, 1.5, -1.5, 2.0, -2.0, 2.5, -2.5];

    /// <summary>
    /// <see cref="Measure"/> at <paramref name="fastSide"/>; when a passage there falls inside a gap too wide to time
    /// it (a revolution at a segment's end is then lost), also at references up to 2.5 rad to either side, nearest first,
    /// keeping the first that spans strictly more revolutions. Records without wide gaps are timed at the fast side alone.
    /// </summary>
    public static PeriodMeasurement MeasureAroundFastSide(ReadOnlySpan<double> time, ReadOnlySpan<double> phase, ReadOnlySpan<double> speed, ReadOnlySpan<int> segmentStarts, double fastSide)
    {
        var best = Measure(time, phase, speed, segmentStarts, fastSide);
        if (best.LeftOut == 0)
        {
            return best;
        }

        foreach (var offset in AlternativeOffsets)
        {
            var reference = fastSide + offset;
            reference -= 2.0 * Math.PI * Math.Floor(reference / (2.0 * Math.PI));
            var candidate = Measure(time, phase, speed, segmentStarts, reference);
            if (candidate.Revolutions > best.Revolutions)
            {
                best = candidate;
            }
        }

        return best;
    }

    /// <summary>
    /// A step longer than this many typical sampling steps is a bridged gap (missing rows): a passage inside it is
    /// timed on the cubic Hermite interpolant of phase and speed rather than on the chord (ours).
    /// </summary>
    public const double GapSteps = 2.5;

    /// <summary>
    /// Largest phase advance (radians) across a bridged gap over which a passage is still timed; beyond it the
    /// interpolant cannot be trusted to a small fraction of the gap and the passage is left out (ours).
    /// </summary>
    public const double MaxBridgedAdvance = 1.0;

    /// <summary>
    /// Finds the passages of <paramref name="phase"/> (unwrapped, smoothed) through θref + 2πk in each segment.
    /// Between neighbouring samples a passage is interpolated linearly; across a bridged gap (a step longer than
    /// <see cref="GapSteps"/> typical steps) on the cubic Hermite interpolant of phase and <paramref name="speed"/>
    /// (de Boor, A Practical Guide to Splines, 2001, ch. IV), whose error falls as the fourth power of the step instead
    /// of the square; a passage across a gap where the phase advances more than <see cref="MaxBridgedAdvance"/> is left
    /// out. Timing at the fast side keeps the jitter small: a phase error δ becomes a time error δ/θ̇ (common
    /// practice, no source). O(n).
    /// </summary>
    /// <param name="time">Sample times.</param>
    /// <param name="phase">Unwrapped, smoothed phase.</param>
    /// <param name="speed">Smoothed phase velocity at the samples, or empty to time every passage on the chord.</param>
    /// <param name="segmentStarts">First sample of each segment (the phase is not followed from one to the next).</param>
    /// <param name="referencePhase">Reference phase θref.</param>
    public static PeriodMeasurement Measure(ReadOnlySpan<double> time, ReadOnlySpan<double> phase, ReadOnlySpan<double> speed, ReadOnlySpan<int> segmentStarts, double referencePhase)
    {
        var twoPi = 2.0 * Math.PI;
        var gap = GapSteps * TypicalStep(time);
        var crossings = new List<double>();
        var periods = new List<double>();
        var spanned = 0.0;
        var revolutions = 0;
        var leftOut = 0;
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : time.Length;
            if (e - s < 2)
            {
                continue;
            }

            // Level index m of the next passage: θref + 2πm is the first level above the segment's first phase.
            var next = Math.Floor((phase[s] - referencePhase) / twoPi) + 1;
            double firstTime = double.NaN, lastTime = double.NaN, firstLevel = 0, lastLevel = 0;
            for (var i = s + 1; i < e; i++)
            {
                var target = referencePhase + (next * twoPi);
                if (!(phase[i] >= target && phase[i - 1] < target))
                {
                    continue;
                }

                var level = next;
                next = Math.Floor((phase[i] - referencePhase) / twoPi) + 1;
                var h = time[i] - time[i - 1];
                double tc;
                if (h <= gap || speed.IsEmpty)
                {
                    var f = (target - phase[i - 1]) / (phase[i] - phase[i - 1]);
                    tc = time[i - 1] + (f * h);
                }
                else if (phase[i] - phase[i - 1] <= MaxBridgedAdvance)
                {
                    tc = time[i - 1] + (h * HermiteRoot(phase[i - 1], phase[i], speed[i - 1] * h, speed[i] * h, target));
                }
                else
                {
                    leftOut++;
                    continue;
                }

                crossings.Add(tc);
                if (double.IsNaN(firstTime))
                {
                    firstTime = tc;
                    firstLevel = level;
                }
                else if (level - lastLevel == 1)
                {
                    periods.Add(tc - lastTime);
                }

                lastTime = tc;
                lastLevel = level;
            }

            if (!double.IsNaN(firstTime) && lastLevel > firstLevel)
            {
                spanned += lastTime - firstTime;
                revolutions += (int)(lastLevel - firstLevel);
            }
        }

        var mean = revolutions > 0 ? spanned / revolutions : double.NaN;
        var se = periods.Count >= 2 ? Numerics.SampleStatistics.StandardDeviation(periods) / Math.Sqrt(revolutions) : double.NaN;
        return new PeriodMeasurement(referencePhase, [.. crossings], [.. periods], new Estimate(mean, se), revolutions, leftOut);
    }

    /// <summary>
    /// The fraction u ∈ [0, 1] of a step at which the cubic Hermite interpolant with end values p0, p1 and end slopes
    /// (per unit u) m0, m1 takes the value <paramref name="target"/>, found by bisection on the bracket p0 &lt; target ≤ p1
    /// (the interpolant may not be monotone; bisection keeps a root inside the bracket).
    /// </summary>
    internal static double HermiteRoot(double p0, double p1, double m0, double m1, double target)
    {
        double lo = 0, hi = 1;
        for (var it = 0; it < 60; it++)
        {
            var u = 0.5 * (lo + hi);
            if (Hermite(p0, p1, m0, m1, u) < target)
            {
                lo = u;
            }
            else
            {
                hi = u;
            }
        }

        return 0.5 * (lo + hi);
    }

    private static double Hermite(double p0, double p1, double m0, double m1, double u)
    {
        var u2 = u * u;
        var u3 = u2 * u;
        return (((2 * u3) - (3 * u2) + 1) * p0) + ((u3 - (2 * u2) + u) * m0) + (((-2 * u3) + (3 * u2)) * p1) + ((u3 - u2) * m1);
    }

    /// <summary>Median sampling step, from at most about 4097 evenly spread steps (O(1) in the record's length).</summary>
    private static double TypicalStep(ReadOnlySpan<double> time)
    {
        if (time.Length < 2)
        {
            return double.NaN;
        }

        var stride = Math.Max(1, (time.Length - 1) / 4096);
        var steps = new List<double>();
        for (var i = 1; i < time.Length; i += stride)
        {
            steps.Add(time[i] - time[i - 1]);
        }

        steps.Sort();
        return steps[steps.Count / 2];
    }
}
