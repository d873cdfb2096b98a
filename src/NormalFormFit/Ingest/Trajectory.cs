namespace NormalFormFit.Ingest;

/// <summary>A phase trajectory ready for analysis: unwrapped and oriented so that the mean speed is positive.</summary>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="Phase">Unwrapped phase (radians), increasing on average.</param>
/// <param name="SegmentStarts">First sample of each contiguous segment.</param>
/// <param name="Direction">+1 when the recorded phase increased, −1 when it was negated to make it increase.</param>
/// <param name="LargeSteps">Number of sample-to-sample steps above 0.8π after unwrapping (unwrapping is then unsafe).</param>
public sealed record Trajectory(double[] Time, double[] Phase, int[] SegmentStarts, int Direction, int LargeSteps)
{
    /// <summary>Number of samples.</summary>
    public int Count => Time.Length;

    /// <summary>End (exclusive) of segment <paramref name="k"/>.</summary>
    public int SegmentEnd(int k) => k + 1 < SegmentStarts.Length ? SegmentStarts[k + 1] : Time.Length;

    /// <summary>
    /// Unwraps a recorded phase so consecutive samples differ by less than π (common practice, no source), unless
    /// the recording says it is already unwrapped;
    /// across a gap the turn count is chosen to continue the mean speed. Orients so the phase increases.
    /// O(n). Never modifies the recording.
    /// </summary>
    public static Trajectory FromRecording(PhaseRecording recording)
    {
        ArgumentNullException.ThrowIfNull(recording);
        var t = recording.Time;
        var raw = recording.Phase;
        var n = t.Length;
        var phase = new double[n];
        var twoPi = 2.0 * Math.PI;
        var segStarts = recording.SegmentStarts;
        var offset = 0.0;
        var large = 0;
        for (var k = 0; k < segStarts.Length; k++)
        {
            var s = segStarts[k];
            var e = k + 1 < segStarts.Length ? segStarts[k + 1] : n;
            if (k > 0)
            {
                // Continue across the gap at the mean speed so far.
                var speed = (phase[s - 1] - phase[0]) / Math.Max(t[s - 1] - t[0], double.Epsilon);
                var predicted = phase[s - 1] + (speed * (t[s] - t[s - 1]));
                var turns = Math.Round((predicted - raw[s]) / twoPi);
                offset = turns * twoPi;
            }

            phase[s] = raw[s] + offset;
            for (var i = s + 1; i < e; i++)
            {
                var d = raw[i] - raw[i - 1];
                var jump = recording.Unwrapped ? 0.0 : Math.Round(d / twoPi);
                offset -= jump * twoPi;
                d -= jump * twoPi;
                if (Math.Abs(d) > 0.8 * Math.PI)
                {
                    large++;
                }

                phase[i] = raw[i] + offset;
            }
        }

        var direction = n > 1 && phase[n - 1] < phase[0] ? -1 : 1;
        if (direction < 0)
        {
            for (var i = 0; i < n; i++)
            {
                phase[i] = -phase[i];
            }
        }

        return new Trajectory((double[])t.Clone(), phase, (int[])segStarts.Clone(), direction, large);
    }
}
