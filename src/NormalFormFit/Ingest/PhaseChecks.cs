using NormalFormFit.Numerics;
using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>
/// Checks that a column read as a phase behaves like one, and the rejection of isolated jumps of the phase.
/// </summary>
public static class PhaseChecks
{
    /// <summary>Median wrapped step between neighbours above which the samples cannot be followed as a phase (radians).</summary>
    public const double MaxTypicalStep = 1.2;

    /// <summary>Smallest departure (radians) of a sample from its neighbours' line for it to count as an isolated jump.</summary>
    public const double MinJump = 1.0;

    /// <summary>Departure from the neighbours' line, in robust standard deviations, above which a sample is an isolated jump.</summary>
    public const double JumpSigmas = 8.0;

    /// <summary>
    /// An error when <paramref name="recording"/> does not behave like a phase: its typical (median) step between
    /// neighbours, taken modulo a turn, exceeds <see cref="MaxTypicalStep"/> (samples too far apart to follow, or not
    /// an angle at all); or its values spread over more than a turn, reach beyond [−2π, 2π] (where a wrapped phase
    /// lives) and do not wind (the net advance is less than half the spread), like a voltage in mV. Null when it
    /// looks like a phase. O(n).
    /// </summary>
    public static Diagnostic? NotAPhase(PhaseRecording recording)
    {
        ArgumentNullException.ThrowIfNull(recording);
        var p = recording.Phase;
        var n = p.Length;
        if (n < 3)
        {
            return null;
        }

        var twoPi = 2 * Math.PI;
        var stride = Math.Max(1, (n - 1) / 16384);
        var steps = new List<double>(((n - 1) / stride) + 1);
        double min = p[0], max = p[0];
        for (var i = 1; i < n; i++)
        {
            if (i % stride == 0)
            {
                var d = p[i] - p[i - 1];
                steps.Add(Math.Abs(recording.Unwrapped ? d : d - (twoPi * Math.Round(d / twoPi))));
            }

            min = Math.Min(min, p[i]);
            max = Math.Max(max, p[i]);
        }

        var column = recording.PhaseColumnName is { } c ? $"'{c}'" : "read";
        var ic = CultureInfo.InvariantCulture;
        var hint = "expected an angle in radians, wrapped or winding: if it is in degrees or turns, name the column 'theta_deg' or 'theta_turns' or pass --phase-unit; a signal such as a voltage is not a phase: record the positions (x, y) of a marker, or the time of each cycle as event times";
        var typical = steps.Count > 0 ? SampleStatistics.MedianInPlace([.. steps]) : 0.0;
        if (typical > MaxTypicalStep)
        {
            return new Diagnostic(Severity.Error, "not-a-phase", string.Create(ic,
                $"the column {column} as the phase does not behave like one: neighbouring samples differ by {Numerics.ErrorDigits.Plain(typical, 3)} rad (modulo a turn) in the median, too much to follow; {hint}"),
                recording.File);
        }

        var range = max - min;
        var net = Math.Abs(p[^1] - p[0]);
        var beyondATurn = min < -twoPi * 1.05 || max > twoPi * 1.05;
        if (range > twoPi * 1.05 && beyondATurn && net < 0.5 * range)
        {
            return new Diagnostic(Severity.Error, "not-a-phase", string.Create(ic,
                $"the column {column} as the phase does not behave like one: its values run from {Numerics.ErrorDigits.Plain(min, 4)} to {Numerics.ErrorDigits.Plain(max, 4)} rad ({Numerics.ErrorDigits.Plain(range / twoPi, 3)} turns) but advance only {Numerics.ErrorDigits.Plain(net / twoPi, 3)} turns from first to last: they neither stay within a turn nor wind; {hint}"),
                recording.File);
        }

        return null;
    }

    /// <summary>
    /// Removes isolated jumps: a sample that leaves the line between its two neighbours (modulo a turn) by more than
    /// <see cref="JumpSigmas"/> robust standard deviations and at least <see cref="MinJump"/> rad, the largest departure among its neighbours, with the step into it
    /// and the step out of it in opposite senses (out and straight back: a tracker or a phase detector jumping for one
    /// sample, not a slip, which does not come back). The robust standard deviation is 1.4826 × the median absolute
    /// departure (Hampel 1974, J. Am. Stat. Assoc. 69:383, the MAD scaled to the normal). Segment ends are kept. O(n).
    /// </summary>
    /// <returns>The recording without the jumps (the same instance when there are none) and the number removed.</returns>
    public static (PhaseRecording Recording, int Removed) RejectIsolatedJumps(PhaseRecording recording)
    {
        ArgumentNullException.ThrowIfNull(recording);
        var t = recording.Time;
        var p = recording.Phase;
        var n = p.Length;
        if (n < 5)
        {
            return (recording, 0);
        }

        var twoPi = 2 * Math.PI;
        var unwrapped = recording.Unwrapped;
        double Wrap(double d) => unwrapped ? d : d - (twoPi * Math.Round(d / twoPi));
        double Departure(int i)
        {
            var f = (t[i] - t[i - 1]) / (t[i + 1] - t[i - 1]);
            return Wrap(p[i] - (p[i - 1] + (f * Wrap(p[i + 1] - p[i - 1]))));
        }

        // Robust scale from at most about 16 384 evenly spread interior samples (O(n)).
        var segs = recording.SegmentStarts;
        var stride = Math.Max(1, n / 16384);
        var sample = new List<double>();
        for (var k = 0; k < segs.Length; k++)
        {
            var e = k + 1 < segs.Length ? segs[k + 1] : n;
            for (var i = segs[k] + 1; i < e - 1; i += stride)
            {
                sample.Add(Math.Abs(Departure(i)));
            }
        }

        if (sample.Count == 0)
        {
            return (recording, 0);
        }

        var sigma = 1.4826 * SampleStatistics.MedianInPlace([.. sample]);
        var limit = Math.Max(JumpSigmas * sigma, MinJump);
        bool[]? drop = null;
        var removed = 0;
        for (var k = 0; k < segs.Length; k++)
        {
            var e = k + 1 < segs.Length ? segs[k + 1] : n;
            var s0 = segs[k];
            for (var i = s0 + 1; i < e - 1; i++)
            {
                var here = Math.Abs(Departure(i));
                if (here <= limit
                    || (i - 1 > s0 && Math.Abs(Departure(i - 1)) > here)
                    || (i + 1 < e - 1 && Math.Abs(Departure(i + 1)) > here))
                {
                    continue;
                }

                var into = Wrap(p[i] - p[i - 1]);
                var outOf = Wrap(p[i + 1] - p[i]);
                if (Math.Sign(into) != Math.Sign(outOf))
                {
                    drop ??= new bool[n];
                    drop[i] = true;
                    removed++;
                }
            }
        }

        if (drop is null)
        {
            return (recording, 0);
        }

        var keep = new List<int>(n - removed);
        var starts = new List<int>();
        var nextStart = 0;
        for (var i = 0; i < n; i++)
        {
            var isStart = nextStart < recording.SegmentStarts.Length && recording.SegmentStarts[nextStart] == i;
            if (isStart)
            {
                nextStart++;
                starts.Add(keep.Count);
            }

            if (!drop[i])
            {
                keep.Add(i);
            }
        }

        return (recording with
        {
            Time = [.. keep.Select(i => t[i])],
            Phase = [.. keep.Select(i => p[i])],
            SegmentStarts = [.. starts.Distinct()],
        }, removed);
    }

}
