namespace NormalFormFit.Bottleneck;

/// <summary>Periods measured from the passages of the phase through a reference phase.</summary>
/// <param name="ReferencePhase">The reference phase (radians in [0, 2π)), on the fast side θ* + π.</param>
/// <param name="CrossingTimes">Times of the passages (first passage of each level θref + 2πk).</param>
/// <param name="Periods">Differences of consecutive passages within one segment.</param>
/// <param name="Mean">Mean period with standard error SD/√N (revolutions treated as independent; conservative under pure measurement noise).</param>
public sealed record PeriodMeasurement(double ReferencePhase, double[] CrossingTimes, double[] Periods, Estimate Mean)
{
    /// <summary>Number of whole revolutions timed.</summary>
    public int Revolutions => Periods.Length;

    /// <summary>
    /// Finds the passages of <paramref name="phase"/> (unwrapped, smoothed) through θref + 2πk in each segment,
    /// by linear interpolation between samples. Timing at the fast side keeps the jitter small: a phase
    /// error δ becomes a time error δ/θ̇ (common practice, no source). O(n).
    /// </summary>
    public static PeriodMeasurement Measure(ReadOnlySpan<double> time, ReadOnlySpan<double> phase, ReadOnlySpan<int> segmentStarts, double referencePhase)
    {
        var twoPi = 2.0 * Math.PI;
        var crossings = new List<double>();
        var periods = new List<double>();
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : time.Length;
            if (e - s < 2)
            {
                continue;
            }

            var level = Math.Floor((phase[s] - referencePhase) / twoPi) + 1;
            var previous = double.NaN;
            for (var i = s + 1; i < e; i++)
            {
                var target = referencePhase + (level * twoPi);
                if (phase[i] >= target && phase[i - 1] < target)
                {
                    var f = (target - phase[i - 1]) / (phase[i] - phase[i - 1]);
                    var tc = time[i - 1] + (f * (time[i] - time[i - 1]));
                    crossings.Add(tc);
                    if (!double.IsNaN(previous))
                    {
                        periods.Add(tc - previous);
                    }

                    previous = tc;
                    level = Math.Floor((phase[i] - referencePhase) / twoPi) + 1;
                }
            }
        }

        var mean = periods.Count > 0 ? periods.Average() : double.NaN;
        var se = Numerics.SampleStatistics.StandardErrorOfMean(periods);
        return new PeriodMeasurement(referencePhase, [.. crossings], [.. periods], new Estimate(mean, se));
    }
}
