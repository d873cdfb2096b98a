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

    /// <summary>Gaps (steps longer than <see cref="GapStep"/> typical steps) across which the phase was followed.</summary>
    public int BridgedGaps { get; init; }

    /// <summary>Gaps across which the phase could not be followed: each starts a new segment.</summary>
    public int SplitGaps { get; init; }

    /// <summary>A time step longer than this many typical (median) steps is a gap: at least one sample is missing there.</summary>
    public const double GapStep = 1.5;

    /// <summary>
    /// A gap longer than this fraction of the local revolution time splits a segment: over a shorter gap the phase
    /// advances by less than a turn, and the previous revolution predicts the advance (see <see cref="FromRecording"/>).
    /// </summary>
    public const double MaxGapFraction = 0.5;

    /// <summary>
    /// Unwraps a recorded phase so consecutive samples differ by less than π (common practice, no source), unless
    /// the recording says it is already unwrapped. Across a gap (a step longer than <see cref="GapStep"/> typical
    /// steps: missing rows) the turn count is chosen to continue the motion: the advance over the gap is predicted by
    /// the advance over the same stretch of time one revolution earlier (the local revolution time T is the duration
    /// of the last whole turn). Before a whole turn has been seen, T is 2π over the mean speed between gaps, and the
    /// advance is the recorded change taken forward into [−<see cref="ForwardSlack"/>, 2π − <see cref="ForwardSlack"/>):
    /// over less than a turn's time a phase that moves forward advances by less than a turn. A gap longer than
    /// <see cref="MaxGapFraction"/>·T cannot be followed: it starts a new segment, and across it the turn count
    /// continues the mean speed. A run at rest (T infinite) is followed across any gap. Segments given by the
    /// recording stay separate. Orients so the phase increases. O(n log n) at worst (a binary search per gap).
    /// Never modifies the recording.
    /// </summary>
    public static Trajectory FromRecording(PhaseRecording recording)
    {
        ArgumentNullException.ThrowIfNull(recording);
        var t = recording.Time;
        var raw = recording.Phase;
        var n = t.Length;
        var phase = new double[n];
        var twoPi = 2.0 * Math.PI;
        var given = recording.SegmentStarts;
        var starts = new List<int>();
        var typical = TypicalStep(t);
        var meanSpeed = MeanSpeedBetweenGaps(recording, typical);
        var offset = 0.0;
        var large = 0;
        int bridged = 0, split = 0;
        for (var k = 0; k < given.Length; k++)
        {
            var s = given[k];
            var e = k + 1 < given.Length ? given[k + 1] : n;
            if (k > 0)
            {
                offset = ContinueMeanSpeed(t, phase, raw, s) - raw[s];
            }

            starts.Add(s);
            var segStart = s;
            phase[s] = raw[s] + offset;

            // Times at which the unwrapped phase first reached each new whole turn above (and below) its start.
            var upLevel = Math.Floor(phase[s] / twoPi);
            var downLevel = Math.Ceiling(phase[s] / twoPi);
            double upLast = double.NaN, upPrev = double.NaN, downLast = double.NaN, downPrev = double.NaN;
            for (var i = s + 1; i < e; i++)
            {
                var dt = t[i] - t[i - 1];
                var d = raw[i] - raw[i - 1];
                if (recording.Unwrapped)
                {
                    phase[i] = raw[i] + offset;
                }
                else if (!(dt > GapStep * typical))
                {
                    var jump = Math.Round(d / twoPi);
                    offset -= jump * twoPi;
                    if (Math.Abs(d - (jump * twoPi)) > 0.8 * Math.PI)
                    {
                        large++;
                    }

                    phase[i] = raw[i] + offset;
                }
                else
                {
                    var up = meanSpeed >= 0;
                    var revolution = up ? upLast - upPrev : downLast - downPrev;
                    var local = double.IsFinite(revolution) ? revolution : meanSpeed != 0 ? twoPi / Math.Abs(meanSpeed) : double.PositiveInfinity;
                    if (dt > MaxGapFraction * local)
                    {
                        split++;
                        starts.Add(i);
                        segStart = i;
                        offset = ContinueMeanSpeed(t, phase, raw, i) - raw[i];
                        phase[i] = raw[i] + offset;
                        upLevel = Math.Floor(phase[i] / twoPi);
                        downLevel = Math.Ceiling(phase[i] / twoPi);
                        upLast = upPrev = downLast = downPrev = double.NaN;
                        continue;
                    }

                    bridged++;
                    double advance;
                    if (double.IsFinite(revolution) && t[i] - revolution >= t[segStart])
                    {
                        // The same stretch of time one revolution earlier.
                        advance = PhaseAt(t, phase, segStart, i, t[i] - revolution) - PhaseAt(t, phase, segStart, i, t[i - 1] - revolution);
                    }
                    else
                    {
                        // No whole turn seen yet: over less than half a turn's time the phase moves forward by less
                        // than a turn, so the advance is the recorded change taken into [−slack, 2π − slack) forward.
                        var sense = up ? 1.0 : -1.0;
                        var forward = sense * d;
                        forward -= twoPi * Math.Floor((forward + ForwardSlack) / twoPi);
                        advance = sense * forward;
                    }

                    var predicted = phase[i - 1] + advance;
                    var turns = Math.Round((predicted - (raw[i] + offset)) / twoPi);
                    offset += turns * twoPi;
                    phase[i] = raw[i] + offset;
                }

                var level = Math.Floor(phase[i] / twoPi);
                if (level > upLevel)
                {
                    upLevel = level;
                    upPrev = upLast;
                    upLast = t[i];
                }

                var levelDown = Math.Ceiling(phase[i] / twoPi);
                if (levelDown < downLevel)
                {
                    downLevel = levelDown;
                    downPrev = downLast;
                    downLast = t[i];
                }
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

        return new Trajectory((double[])t.Clone(), phase, [.. starts], direction, large) { BridgedGaps = bridged, SplitGaps = split };
    }

    /// <summary>
    /// How far (radians) the phase may seem to move backwards across a gap, before a whole turn has been seen, and still
    /// be read as noise rather than as most of a turn forward.
    /// </summary>
    public const double ForwardSlack = 0.3;

    /// <summary>
    /// Mean phase speed over the steps that are not gaps (each taken modulo a turn unless the recording is unwrapped):
    /// the sense of motion and the revolution time before a whole turn has been seen. O(n).
    /// </summary>
    private static double MeanSpeedBetweenGaps(PhaseRecording recording, double typical)
    {
        var t = recording.Time;
        var raw = recording.Phase;
        var twoPi = 2.0 * Math.PI;
        double advance = 0, time = 0;
        for (var k = 0; k < recording.SegmentStarts.Length; k++)
        {
            var s = recording.SegmentStarts[k];
            var e = k + 1 < recording.SegmentStarts.Length ? recording.SegmentStarts[k + 1] : t.Length;
            for (var i = s + 1; i < e; i++)
            {
                var dt = t[i] - t[i - 1];
                if (dt > GapStep * typical)
                {
                    continue;
                }

                var d = raw[i] - raw[i - 1];
                advance += recording.Unwrapped ? d : d - (twoPi * Math.Round(d / twoPi));
                time += dt;
            }
        }

        return time > 0 ? advance / time : 0.0;
    }

    /// <summary>The phase at sample <paramref name="s"/> that continues the mean speed of everything before it (its own value when nothing precedes).</summary>
    private static double ContinueMeanSpeed(double[] t, double[] phase, double[] raw, int s)
    {
        if (s == 0)
        {
            return raw[0];
        }

        var speed = (phase[s - 1] - phase[0]) / Math.Max(t[s - 1] - t[0], double.Epsilon);
        var predicted = phase[s - 1] + (speed * (t[s] - t[s - 1]));
        return raw[s] + (2.0 * Math.PI * Math.Round((predicted - raw[s]) / (2.0 * Math.PI)));
    }

    /// <summary>Linear interpolation of the unwrapped phase at time <paramref name="at"/> among samples [s, end).</summary>
    private static double PhaseAt(double[] t, double[] phase, int s, int end, double at)
    {
        var k = Array.BinarySearch(t, s, end - s, at);
        if (k >= 0)
        {
            return phase[k];
        }

        k = ~k;
        if (k <= s)
        {
            return phase[s];
        }

        if (k >= end)
        {
            return phase[end - 1];
        }

        var f = (at - t[k - 1]) / (t[k] - t[k - 1]);
        return phase[k - 1] + (f * (phase[k] - phase[k - 1]));
    }

    /// <summary>Median time step, from at most 4097 evenly spread steps (O(n)).</summary>
    internal static double TypicalStep(double[] t)
    {
        var n = t.Length;
        if (n < 2)
        {
            return double.NaN;
        }

        var stride = Math.Max(1, (n - 1) / 4096);
        var sample = new List<double>();
        for (var i = 1; i < n; i += stride)
        {
            sample.Add(t[i] - t[i - 1]);
        }

        sample.Sort();
        return sample[sample.Count / 2];
    }
}
