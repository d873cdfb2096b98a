using NormalFormFit.Numerics;
using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>How events are detected in a single signal; every level is chosen from the signal unless given.</summary>
public sealed record SignalEventOptions
{
    /// <summary>Event threshold in the signal's unit; null: halfway between the baseline and the tip level.</summary>
    public double? Threshold { get; init; }

    /// <summary>Hysteresis in the signal's unit: after an event the signal must fall below threshold − hysteresis before the next; null: a quarter of the span from baseline to tip.</summary>
    public double? Hysteresis { get; init; }

    /// <summary>Refractory time in the run's time unit: a crossing sooner than this after the last event is not an event; null: the median time an event stays above threshold.</summary>
    public double? RefractoryTime { get; init; }

    /// <summary>Also reconstruct a protophase from the signal (<see cref="SignalPhase"/>) for the bottleneck route; off: periods from the events only.</summary>
    public bool Protophase { get; init; }

    /// <summary>The set's embedding for the protophase (<see cref="SignalEmbedding.FromRuns"/>); null: each run's own.</summary>
    public SignalEmbedding? Embedding { get; init; }

    /// <summary>Levels from the signal.</summary>
    public static SignalEventOptions Default { get; } = new();

    /// <summary>Null when the options can be used; else what is wrong, for a usage message.</summary>
    public string? Validate() =>
        Threshold is { } t && !double.IsFinite(t) ? "the event threshold must be a finite number"
        : Hysteresis is { } h && !(h >= 0 && double.IsFinite(h)) ? "the event hysteresis must be zero or a positive number"
        : RefractoryTime is { } r && !(r >= 0 && double.IsFinite(r)) ? "the refractory time must be zero or a positive number"
        : null;
}

/// <summary>What the event detector used and found in one signal.</summary>
/// <param name="Column">Header name of the signal column.</param>
/// <param name="Baseline">Median of the signal.</param>
/// <param name="TipLevel">Median of the excursions' maxima (NaN when no excursion rose clear of the noise).</param>
/// <param name="NoiseSd">Robust standard deviation of the sample-to-sample noise.</param>
/// <param name="Threshold">Threshold used (NaN when none: no excursion rose clear of the noise).</param>
/// <param name="Hysteresis">Hysteresis used.</param>
/// <param name="RefractoryTime">Refractory time used, in the run's time unit.</param>
/// <param name="Count">Events found.</param>
/// <param name="Glitches">Crossings left out because the signal stayed above threshold for fewer than <see cref="SignalEvents.MinimumWidthSamples"/> samples.</param>
/// <param name="WithinRefractory">Crossings left out because they came sooner than the refractory time after an event.</param>
/// <param name="ThresholdGiven">The threshold was given by the user, not chosen from the signal.</param>
public sealed record SignalEventSummary(
    string Column,
    double Baseline,
    double TipLevel,
    double NoiseSd,
    double Threshold,
    double Hysteresis,
    double RefractoryTime,
    int Count,
    int Glitches,
    int WithinRefractory,
    bool ThresholdGiven);

/// <summary>Events found in a signal, as event times, with what the detector used.</summary>
/// <param name="Events">Event times (upward threshold crossings), split where the signal had gaps.</param>
/// <param name="Summary">Levels used and counts.</param>
public sealed record DetectedEvents(EventRecording Events, SignalEventSummary Summary);

/// <summary>
/// Upward threshold crossings with hysteresis in one signal (a membrane voltage, a photogate output).
/// </summary>
/// <remarks>
/// Levels from the signal itself: baseline = median; noise σ = 1.4826·MAD of the first differences / √2 (white noise
/// doubles its variance in a difference; robust against the few large steps of spikes); excursions = stretches that rise
/// above baseline + <see cref="ClearOfNoise"/>·σ and end when the signal is back below the baseline (so a noisy slow
/// approach to an event is one excursion, not many); tip level = median of the upper mode of the excursions' maxima
/// (<see cref="TipLevel"/>: spikes over subthreshold bumps; none when the maxima are as varied as noise); threshold halfway between
/// baseline and tip; hysteresis a quarter of that span (the signal must fall below threshold − hysteresis before the next
/// event). A crossing that stays above threshold for fewer than <see cref="MinimumWidthSamples"/> samples is a glitch; a
/// crossing sooner than the refractory time (default: the median time above threshold) after the last event belongs to
/// it. Crossing time by linear interpolation between the samples on either side. A signal with no excursion clear of the
/// noise has no events: a silent run. These are the usual rules of threshold spike detection (common practice, no
/// source; the 8σ margin is ours). Cost O(n log n) for the medians, O(n) for the crossings.
/// </remarks>
public static class SignalEvents
{
    /// <summary>An excursion counts only when it rises this many noise standard deviations above the baseline.</summary>
    public const double ClearOfNoise = 8.0;

    /// <summary>A crossing must stay above threshold for at least this many samples; fewer is a glitch.</summary>
    public const int MinimumWidthSamples = 2;

    /// <summary>Two modes of the excursions' maxima are events and bumps when their medians are this many robust spreads apart; one mode is events when it stands this far above the clear-of-noise level.</summary>
    public const double ModeSeparation = 3.0;

    /// <summary>Hysteresis as a fraction of the span from baseline to tip level.</summary>
    public const double HysteresisFraction = 0.25;

    /// <summary>Samples at the maximum (or minimum) value in runs of three or more, as a fraction of all samples, that mark a clipped signal.</summary>
    public const double ClippedFraction = 0.005;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>
    /// Detects the events of <paramref name="signal"/>. Errors (code <c>signal-constant</c>, <c>signal-clipped</c>,
    /// <c>signal-too-short</c>) name the file and the column and say what to do; a signal without events is not an error.
    /// </summary>
    public static Loaded<DetectedEvents> Detect(SignalRecording signal, SignalEventOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(signal);
        options ??= SignalEventOptions.Default;
        var v = signal.Values;
        var t = signal.Time;
        var n = v.Length;
        var where = $"column '{signal.SignalColumnName}'";
        if (n < 3)
        {
            return Loaded.Fail<DetectedEvents>(new Diagnostic(Severity.Error, "signal-too-short",
                $"{where} holds {n} sample(s); events need a signal of many samples per event: record longer", signal.File));
        }

        var min = double.PositiveInfinity;
        var max = double.NegativeInfinity;
        foreach (var x in v)
        {
            min = Math.Min(min, x);
            max = Math.Max(max, x);
        }

        if (!(max - min > 1e-12 * Math.Max(Math.Abs(max), Math.Abs(min))))
        {
            return Loaded.Fail<DetectedEvents>(new Diagnostic(Severity.Error, "signal-constant", string.Create(Inv,
                $"{where} is constant ({Numerics.ErrorDigits.Plain(max, 6)}) over all {n} samples: no events can be found; check that it is the recorded signal (--signal-column) and that the recording was on"),
                signal.File));
        }

        var baseline = SampleStatistics.MedianBySelection(v.AsSpan().ToArray());
        var noise = NoiseSd(v, signal.SegmentStarts);
        noise = Math.Max(noise, 1e-9 * (max - min));
        if (Clipped(v, max, baseline, noise) is { } top)
        {
            return Loaded.Fail<DetectedEvents>(Clip(signal, where, top ? max : min, top, n));
        }

        if (Clipped(v, min, baseline, noise) is { } bottom)
        {
            return Loaded.Fail<DetectedEvents>(Clip(signal, where, bottom ? max : min, bottom, n));
        }

        // Stage 1: excursions clear of the noise give the tip level.
        var clear = baseline + (ClearOfNoise * noise);
        var tips = Excursions(v, signal.SegmentStarts, clear, baseline);
        var tip = TipLevel(tips, baseline, clear);
        if (double.IsNaN(tip))
        {
            tips.Clear();
        }

        double threshold, hysteresis;
        if (options.Threshold is { } given)
        {
            threshold = given;
            hysteresis = options.Hysteresis ?? (tips.Count > 0 ? HysteresisFraction * (tip - baseline) : Math.Max(3 * noise, HysteresisFraction * Math.Abs(given - baseline)));
        }
        else if (tips.Count == 0)
        {
            return Result(signal, [], [0], new SignalEventSummary(signal.SignalColumnName, baseline, double.NaN, noise, double.NaN, double.NaN, 0, 0, 0, 0, false));
        }
        else
        {
            threshold = baseline + ((tip - baseline) / 2);
            hysteresis = options.Hysteresis ?? HysteresisFraction * (tip - baseline);
        }

        var crossings = Crossings(t, v, signal.SegmentStarts, threshold, hysteresis);
        var widths = crossings.Where(c => c.Samples >= MinimumWidthSamples).Select(c => c.Duration).ToArray();
        var refractory = options.RefractoryTime ?? (widths.Length > 0 ? SampleStatistics.Median(widths) : 0);
        var times = new List<double>();
        var segments = new List<int>();
        int glitches = 0, early = 0, lastSegment = -1;
        var last = double.NegativeInfinity;
        foreach (var c in crossings)
        {
            if (c.Samples < MinimumWidthSamples)
            {
                glitches++;
                continue;
            }

            if (c.Segment == lastSegment && c.Time - last < refractory)
            {
                early++;
                continue;
            }

            if (c.Segment != lastSegment)
            {
                segments.Add(times.Count);
                lastSegment = c.Segment;
            }

            times.Add(c.Time);
            last = c.Time;
        }

        if (segments.Count == 0)
        {
            segments.Add(0);
        }

        return Result(signal, [.. times], [.. segments], new SignalEventSummary(signal.SignalColumnName, baseline, tip, noise, threshold, hysteresis, refractory, times.Count, glitches, early, options.Threshold is not null));
    }

    private static Loaded<DetectedEvents> Result(SignalRecording signal, double[] times, int[] segments, SignalEventSummary summary)
    {
        var events = new EventRecording(signal.File, times, segments) { TimeUnit = signal.TimeUnit, Dropped = signal.Dropped };
        return new Loaded<DetectedEvents>(new DetectedEvents(events, summary), []);
    }

    private static Diagnostic Clip(SignalRecording signal, string where, double level, bool top, int n) => new(Severity.Error, "signal-clipped", string.Create(Inv,
        $"{where} sits at its {(top ? "maximum" : "minimum")}, {Numerics.ErrorDigits.Plain(level, 6)}, for runs of samples (over {ClippedFraction:P1} of {n}): the recording was clipped (amplifier or converter out of range), so event shapes and times are not trustworthy; record again with a larger input range or less gain"),
        signal.File);

    // Null when not clipped at this extreme; true for the top, false for the bottom.
    private static bool? Clipped(double[] v, double extreme, double baseline, double noise)
    {
        if (!(Math.Abs(extreme - baseline) > ClearOfNoise * noise))
        {
            return null;
        }

        var inRuns = 0;
        var run = 0;
        for (var i = 0; i <= v.Length; i++)
        {
            if (i < v.Length && v[i] == extreme)
            {
                run++;
                continue;
            }

            if (run >= 3)
            {
                inRuns += run;
            }

            run = 0;
        }

        return inRuns >= Math.Max(20, ClippedFraction * v.Length) ? extreme > baseline : null;
    }

    private readonly record struct Crossing(double Time, int Samples, double Duration, int Segment);

    /// <summary>Upward crossings of <paramref name="threshold"/>, re-armed below threshold − hysteresis; O(n).</summary>
    private static List<Crossing> Crossings(double[] t, double[] v, int[] segmentStarts, double threshold, double hysteresis)
    {
        var result = new List<Crossing>();
        var rearm = threshold - hysteresis;
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : v.Length;
            var armed = false;
            var open = false;
            double start = 0, lastAbove = 0;
            var samples = 0;
            for (var i = s; i < e; i++)
            {
                if (!armed && !open && v[i] < rearm)
                {
                    armed = true;
                }

                if (armed && i > s && v[i - 1] < threshold && v[i] >= threshold)
                {
                    // Linear interpolation between the samples on either side of the crossing.
                    start = t[i - 1] + ((threshold - v[i - 1]) / (v[i] - v[i - 1]) * (t[i] - t[i - 1]));
                    armed = false;
                    open = true;
                    samples = 0;
                }

                if (open)
                {
                    if (v[i] >= threshold)
                    {
                        samples++;
                        lastAbove = t[i];
                    }

                    if (v[i] < rearm)
                    {
                        result.Add(new Crossing(start, samples, lastAbove - start, k));
                        open = false;
                        armed = true;
                    }
                }
            }

            if (open)
            {
                result.Add(new Crossing(start, samples, lastAbove - start, k));
            }
        }

        return result;
    }

    /// <summary>Maxima of the stretches that rise above <paramref name="high"/> and end below <paramref name="low"/>, at least two samples above <paramref name="high"/>.</summary>
    private static List<double> Excursions(double[] v, int[] segmentStarts, double high, double low)
    {
        var tips = new List<double>();
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : v.Length;
            var inside = false;
            var peak = double.NegativeInfinity;
            var width = 0;
            for (var i = s; i < e; i++)
            {
                if (!inside && v[i] >= high)
                {
                    inside = true;
                    peak = v[i];
                    width = 0;
                }

                if (inside)
                {
                    peak = Math.Max(peak, v[i]);
                    width += v[i] >= high ? 1 : 0;
                    if (v[i] < low)
                    {
                        inside = false;
                        if (width >= MinimumWidthSamples)
                        {
                            tips.Add(peak);
                        }
                    }
                }
            }

            if (inside && width >= MinimumWidthSamples)
            {
                tips.Add(peak);
            }
        }

        return tips;
    }

    /// <summary>
    /// The level of the events' tips, NaN when the excursions are not events. The maxima are split in two by Otsu's
    /// method (Otsu 1979, IEEE Trans. SMC 9:62: the split that maximises the between-class variance). Two modes apart by
    /// more than <see cref="ModeSeparation"/> robust spreads: the upper mode is the events (spikes over subthreshold
    /// bumps), its median the tip level. Otherwise one mode: its median, if it stands above the clear-of-noise level by
    /// more than <see cref="ModeSeparation"/> robust spreads of the maxima (events of one height); else the maxima are as
    /// varied as fluctuations of a noise and there are no events. Either way the tips must stand twice as far above the
    /// baseline as the clear-of-noise level (2 · <see cref="ClearOfNoise"/> σ). O(k log k) for k excursions.
    /// </summary>
    private static double TipLevel(List<double> tips, double baseline, double clear)
    {
        var tip = ModeOfTips(tips, clear);
        return tip - baseline >= 2 * (clear - baseline) ? tip : double.NaN;
    }

    private static double ModeOfTips(List<double> tips, double clear)
    {
        if (tips.Count == 0)
        {
            return double.NaN;
        }

        if (tips.Count == 1)
        {
            return tips[0];
        }

        var sorted = tips.Order().ToArray();
        var k = sorted.Length;
        var total = sorted.Sum();
        double best = -1, lower = 0;
        var split = 0;
        for (var i = 1; i < k; i++)
        {
            lower += sorted[i - 1];
            var m0 = lower / i;
            var m1 = (total - lower) / (k - i);
            var between = (double)i * (k - i) * (m1 - m0) * (m1 - m0);
            if (between > best)
            {
                best = between;
                split = i;
            }
        }

        var low = sorted[..split];
        var high = sorted[split..];
        var highMedian = SampleStatistics.Median(high);
        if (low.Length >= 2 && high.Length >= 2 && highMedian - SampleStatistics.Median(low) > ModeSeparation * (RobustSpread(low) + RobustSpread(high)))
        {
            return highMedian;
        }

        var median = SampleStatistics.Median(sorted);
        return median - clear > ModeSeparation * RobustSpread(sorted) ? median : double.NaN;
    }

    /// <summary>1.4826 · median absolute deviation (a robust standard deviation); 0 for fewer than two values.</summary>
    private static double RobustSpread(double[] values)
    {
        if (values.Length < 2)
        {
            return 0;
        }

        var m = SampleStatistics.Median(values);
        return 1.4826 * SampleStatistics.Median([.. values.Select(x => Math.Abs(x - m))]);
    }

    /// <summary>Robust σ of white noise from the first differences within segments: 1.4826·MAD(Δv)/√2.</summary>
    private static double NoiseSd(double[] v, int[] segmentStarts)
    {
        var diffs = new double[Math.Max(v.Length - 1, 0)];
        var count = 0;
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : v.Length;
            for (var i = s + 1; i < e; i++)
            {
                diffs[count++] = v[i] - v[i - 1];
            }
        }

        if (count == 0)
        {
            return 0;
        }

        // Medians by selection (the order of the differences does not matter here).
        var used = diffs.AsSpan(0, count);
        var m = SampleStatistics.MedianBySelection(used);
        for (var i = 0; i < count; i++)
        {
            used[i] = Math.Abs(used[i] - m);
        }

        return 1.4826 * SampleStatistics.MedianBySelection(used) / Math.Sqrt(2);
    }

}
