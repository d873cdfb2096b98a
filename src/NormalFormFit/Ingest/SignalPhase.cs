using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>How a single signal was turned into a protophase.</summary>
/// <param name="DelaySamples">Embedding delay d in samples: the orbit is (s(tᵢ), s(tᵢ₋d)).</param>
/// <param name="Delay">The delay in the run's time unit (d times the typical sampling step).</param>
/// <param name="DelayRule">How the delay was chosen (for the report).</param>
/// <param name="CentreX">Centre of the protophase angle, first coordinate s(t), in the signal's unit.</param>
/// <param name="CentreY">Centre of the protophase angle, second coordinate s(t − delay).</param>
/// <param name="BackwardFraction">Backward angle over total angle travelled about the centre on the coarse-grained orbit (0: star-shaped about it).</param>
/// <param name="Cycles">Whole cycles (event to event) checked.</param>
/// <param name="CyclesLeftOut">Cycles left out because the protophase ran backwards or did not wind once.</param>
/// <param name="LeftOutTimes">Start and end time of each stretch left out (pairs), for figures and messages.</param>
public sealed record SignalOrbit(
    int DelaySamples,
    double Delay,
    string DelayRule,
    double CentreX,
    double CentreY,
    double BackwardFraction,
    int Cycles,
    int CyclesLeftOut,
    IReadOnlyList<(double Start, double End)> LeftOutTimes)
{
    /// <summary>Length of the mean orbit in the delay plane (the signal's unit): one turn of the protophase, 2π, is this much arc length (NaN when the angle was used).</summary>
    public double LoopLength { get; init; } = double.NaN;
}

/// <summary>
/// The embedding shared by every single-signal run of a set, chosen once from the firing runs together: delay
/// <see cref="SignalPhase.DelayFraction"/> × <see cref="Width"/>. One delay for all runs makes the delay plane the same
/// image of the state space in every run, so that the minimum speeds a are in comparable units across runs; a delay
/// per run changes the image, and with it a, as the spikes change shape with the parameter.
/// </summary>
/// <param name="Width">The median over the firing runs (at least <see cref="SignalPhase.MinimumEvents"/> events) of each run's median event width (time from an event until the signal is back below threshold − hysteresis), in the set's time unit.</param>
/// <param name="Runs">Firing runs it was chosen from.</param>
public sealed record SignalEmbedding(double Width, int Runs)
{
    /// <summary>
    /// The set's embedding from its single-signal runs and their events: the median of the runs' median widths (each
    /// firing run counts once, however long it is); null when no run has <see cref="SignalPhase.MinimumEvents"/> events.
    /// </summary>
    public static SignalEmbedding? FromRuns(IEnumerable<(SignalRecording Signal, DetectedEvents Detected)> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var widths = new List<double>();
        foreach (var (signal, detected) in runs)
        {
            if (detected.Events.Times.Length >= SignalPhase.MinimumEvents)
            {
                var w = SignalPhase.MedianWidth(signal.Time, signal.Values, detected.Events.Times, detected.Summary.Threshold - detected.Summary.Hysteresis);
                if (double.IsFinite(w) && w > 0)
                {
                    widths.Add(w);
                }
            }
        }

        if (widths.Count == 0)
        {
            return null;
        }

        widths.Sort();
        var half = widths.Count / 2;
        var median = widths.Count % 2 == 1 ? widths[half] : 0.5 * (widths[half - 1] + widths[half]);
        return new SignalEmbedding(median, widths.Count);
    }
}

/// <summary>
/// One signal → a protophase: a planar orbit by time-delay embedding, an interior point about which the orbit is
/// star-shaped, arc length along the mean orbit, and every cycle checked for monotone protophase.
/// </summary>
/// <remarks>
/// <para><b>Orbit.</b> The delay coordinates (s(t), s(t − τ)) of one observable of a system on a limit cycle trace a
/// closed curve that is a smooth image of the cycle for generic τ (Takens 1981, "Detecting strange attractors in
/// turbulence", in Dynamical Systems and Turbulence, Springer, vol. 898, pp. 366–381). τ = <see cref="DelayFraction"/> × the events' median width (time
/// from the event until the signal is back below the threshold − hysteresis of the detector), in samples: the upstroke and the downstroke of a spike then lie apart and the spike
/// embeds as a loop. The first minimum of the average mutual information (Fraser &amp; Swinney 1986) was tried and is
/// not used: on Morris–Lecar sweeps it fell at 7–127 ms, longer than the 14 ms spike, which then embeds as two
/// out-and-back needles about which no point sees a monotone angle (measured 2026-12-03, every cycle of the sweep 0.5
/// μA/cm² above onset ran backwards by 1.5–2.6 rad). A small τ in samples is a fixed time on uniform sampling; gaps are
/// never embedded across.</para>
/// <para><b>Centre.</b> The point of a 25 × 25 grid over the orbit's box (then a 9 × 9 grid over the best cell and its
/// neighbours) with the least backward angle per angle travelled, among the points about which the orbit winds once per
/// event (within 25 %); among points within 0.05 of the least, the one that spreads the orbit's time most evenly over the
/// angle. Searched on the whole orbit as at most 20 000 block means for records up to <see cref="LongRecord"/> points; on
/// longer records on the orbit up to its <see cref="CentreCycles"/>-th event, thinned to points
/// <see cref="CentreSpacing"/> × the box diagonal apart (each weighted by the time it stands for), so that the search
/// costs the same however long the record (distance, not time blocks: time blocks would average the spike away).</para>
/// <para><b>One delay per set.</b> In a set the delay is chosen once from all firing runs (<see cref="SignalEmbedding"/>),
/// so that every run's orbit is the same image of the state space and the minimum speeds compare across runs.</para>
/// <para><b>Protophase.</b> Arc length along the mean orbit (<see cref="TemplateBins"/> bins of the angle about the
/// centre, each sample projected onto the nearest segment), scaled to 2π per turn. Why not the angle itself: seen from
/// any point inside a spike-shaped loop the long slow stretch before a spike lies almost along a ray, so the angle hardly
/// moves there and the bottleneck is squeezed into a sliver of the circle (measured: ∮dθ/θ̇ 70–100 ms against periods of
/// 160–360 ms). Why not arc length along the samples: it grows with every noise step and at the bottleneck would be mostly
/// noise; projecting onto the mean orbit does not accumulate noise. An ellipse fit is not used: its centre can lie
/// outside the slow part of a spike-shaped loop.</para>
/// <para><b>Monotone cycles.</b> Cycle k runs from event k to event k + 1. Within it the unwrapped protophase must
/// never fall more than <see cref="BackwardTolerance"/> below its running maximum, and must advance by one turn (within
/// half a turn). A cycle that fails is flagged (<c>signal-cycles-left-out</c>) and its samples are left out, never
/// fitted; the record is split there. Samples before the first and after the last event are checked for backward runs
/// only. Onset and periods do not depend on the choice of protophase; a and b are in its units.</para>
/// Cost O(n) (the grid search runs on a bounded number of points; the projection on a window of the mean orbit).
/// </remarks>
public static class SignalPhase
{
    /// <summary>Largest fall of the protophase below its running maximum within a cycle: larger is a backward loop (measurement noise at the bottleneck moves it by about 0.01–0.1 rad).</summary>
    public const double BackwardTolerance = Math.PI / 4;

    /// <summary>Fewest events for a protophase: two whole cycles.</summary>
    public const int MinimumEvents = 3;

    /// <summary>Delay as a fraction of the events' median width (time from the event until the signal is back below threshold − hysteresis): the upstroke and downstroke of a spike then lie apart and the spike embeds as a loop, not as an out-and-back needle.</summary>
    public const double DelayFraction = 0.25;

    /// <summary>Bins of the angle about the centre in which the mean orbit is taken.</summary>
    public const int TemplateBins = 720;

    /// <summary>Bins either side of a bin whose samples make its mean-orbit point.</summary>
    public const int TemplateSpan = 2;

    /// <summary>Mean-orbit segments either side of a sample's own angle bin searched for its projection.</summary>
    public const int ProjectionWindow = 12;

    /// <summary>Cycles (events) of the stretch on which the centre is searched: enough to average the noise, few enough to be cheap.</summary>
    public const int CentreCycles = 30;

    /// <summary>Spacing of the points of the orbit on which the centre is searched, as a fraction of the diagonal of the orbit's box (points closer than this to the last one kept are merged into it, with their time).</summary>
    public const double CentreSpacing = 0.012;

    private const int Grid = 25;
    private const int FineGrid = 9;

    /// <summary>
    /// The protophase of <paramref name="signal"/> cycle by cycle between the events in <paramref name="detected"/>,
    /// with the delay chosen from this run's own events. Null (with a warning <c>no-signal-orbit</c>) when there are
    /// fewer than <see cref="MinimumEvents"/> events or no centre about which the orbit winds once per event: the run then
    /// keeps its periods only.
    /// </summary>
    public static (PhaseRecording? Phase, SignalOrbit? Orbit, IReadOnlyList<Diagnostic> Diagnostics) FromSignal(SignalRecording signal, DetectedEvents detected) =>
        FromSignal(signal, detected, null);

    /// <summary>
    /// As <see cref="FromSignal(SignalRecording, DetectedEvents)"/>, with the delay and the thinning of
    /// <paramref name="embedding"/> (the set's, <see cref="SignalEmbedding.FromRuns"/>) when one is given, so that every
    /// run of a set is embedded alike; null: from this run's own events.
    /// </summary>
    public static (PhaseRecording? Phase, SignalOrbit? Orbit, IReadOnlyList<Diagnostic> Diagnostics) FromSignal(SignalRecording signal, DetectedEvents detected, SignalEmbedding? embedding)
    {
        ArgumentNullException.ThrowIfNull(signal);
        ArgumentNullException.ThrowIfNull(detected);
        var events = detected.Events;
        var diags = new List<Diagnostic>();
        var ic = CultureInfo.InvariantCulture;
        if (events.Times.Length < MinimumEvents)
        {
            return (null, null, diags);
        }

        var v = signal.Values;
        var t = signal.Time;
        var n = v.Length;
        var step = Trajectory.TypicalStep(t);
        var width = embedding?.Width ?? MedianWidth(t, v, events.Times, detected.Summary.Threshold - detected.Summary.Hysteresis);
        var delay = (int)Math.Clamp(Math.Round(DelayFraction * width / step), 1, Math.Max(1, n / 4));
        var rule = embedding is null
            ? "a quarter of this run's events' median width"
            : string.Create(ic, $"a quarter of the events' median width, {embedding.Width:G4}, over the set's {embedding.Runs} firing run(s)");

        var orbitPoints = Embed(v, t, SegmentIndex(n, signal.SegmentStarts), delay);
        var (x, y, time, seg) = orbitPoints;
        var m = x.Length;
        if (m < 16)
        {
            diags.Add(NoOrbit(signal, "too few samples remain once delayed"));
            return (null, null, diags);
        }

        var centre = ChooseCentre(orbitPoints, events.Times);
        if (centre is not { } c)
        {
            diags.Add(NoOrbit(signal, string.Create(ic, $"no point inside the delay-embedded orbit (delay {delay * step:G3}) has the orbit wind round it once per event")));
            return (null, null, diags);
        }

        // Angle about the centre, unwrapped within segments, oriented to increase.
        var theta = new double[m];
        var net = 0.0;
        for (var k = 0; k < m; k++)
        {
            theta[k] = Math.Atan2(y[k] - c.Y, x[k] - c.X);
            if (k > 0 && seg[k] == seg[k - 1])
            {
                var d = theta[k] - theta[k - 1];
                net += d - (2 * Math.PI * Math.Round(d / (2 * Math.PI)));
            }
        }

        var sense = net >= 0 ? 1.0 : -1.0;
        var unwrapped = new double[m];
        for (var k = 0; k < m; k++)
        {
            if (k == 0 || seg[k] != seg[k - 1])
            {
                unwrapped[k] = sense * theta[k];
                continue;
            }

            var d = (sense * theta[k]) - (sense * theta[k - 1]);
            unwrapped[k] = unwrapped[k - 1] + d - (2 * Math.PI * Math.Round(d / (2 * Math.PI)));
        }

        // The angle only orders the orbit; the protophase is arc length along the mean orbit (see remarks).
        var (arc, loopLength) = ArcLengthPhase(x, y, seg, unwrapped);
        unwrapped = arc;

        // Cycles between events: monotone, one turn.
        var keep = new bool[m];
        Array.Fill(keep, true);
        var leftOut = new List<(double, double)>();
        var cycles = 0;
        var bad = 0;
        var ev = events.Times;
        var k0 = 0;
        var e0 = 0;
        while (e0 < ev.Length && ev[e0] < time[0])
        {
            e0++;
        }

        // Stretch before the first event (partial: backward check only).
        var firstEnd = k0;
        while (firstEnd < m && (e0 >= ev.Length || time[firstEnd] < ev[e0]))
        {
            firstEnd++;
        }

        if (Backward(unwrapped, seg, k0, firstEnd) > BackwardTolerance)
        {
            Drop(keep, k0, firstEnd, time, leftOut);
        }

        k0 = firstEnd;
        for (var e = e0; e < ev.Length && k0 < m; e++)
        {
            var last = e + 1 >= ev.Length;
            var kEnd = k0;
            while (kEnd < m && (last || time[kEnd] < ev[e + 1]))
            {
                kEnd++;
            }

            if (kEnd <= k0)
            {
                continue;
            }

            var oneSegment = seg[k0] == seg[kEnd - 1];
            var back = Backward(unwrapped, seg, k0, kEnd);
            var whole = !last && oneSegment && kEnd < m;
            var ok = back <= BackwardTolerance;
            if (whole)
            {
                cycles++;
                var advance = unwrapped[kEnd] - unwrapped[k0];
                ok &= Math.Abs(advance - (2 * Math.PI)) <= Math.PI;
                if (!ok)
                {
                    bad++;
                }
            }

            if (!ok)
            {
                Drop(keep, k0, kEnd, time, leftOut);
            }

            k0 = kEnd;
        }

        // Kept samples, a new segment wherever a stretch was left out or the signal had a gap.
        var keptTime = new List<double>(m);
        var phase = new List<double>(m);
        var starts = new List<int>();
        var prevKept = -2;
        for (var k = 0; k < m; k++)
        {
            if (!keep[k])
            {
                continue;
            }

            if (prevKept != k - 1 || seg[k] != seg[prevKept])
            {
                starts.Add(keptTime.Count);
            }

            keptTime.Add(time[k]);
            phase.Add(unwrapped[k]);
            prevKept = k;
        }

        if (keptTime.Count < 16)
        {
            diags.Add(NoOrbit(signal, "every cycle's protophase runs backwards"));
            return (null, null, diags);
        }

        if (bad > 0)
        {
            diags.Add(new Diagnostic(Severity.Warning, "signal-cycles-left-out", string.Create(ic,
                $"{bad} of {cycles} cycle(s) of column '{signal.SignalColumnName}' do not go once round the delay-embedded orbit with a monotone protophase (a backward loop: a doublet, a failed spike or a glitch) and are left out of the bottleneck fit"),
                signal.File));
        }

        var orbit = new SignalOrbit(delay, delay * step, rule, c.X, c.Y, c.Backward, cycles, bad, leftOut)
        {
            LoopLength = loopLength,
        };
        var rec = new PhaseRecording(signal.File, [.. keptTime], [.. phase], [.. starts])
        {
            Unwrapped = true,
            TimeUnit = signal.TimeUnit,
            Dropped = signal.Dropped,
            PhaseColumnName = signal.SignalColumnName,
        };
        return (rec, orbit, diags);
    }

    /// <summary>The embedded orbit (s(tᵢ), s(tᵢ₋d)): coordinates, time and segment of each point.</summary>
    private readonly record struct EmbeddedOrbit(double[] X, double[] Y, double[] Time, int[] Segment);

    /// <summary>
    /// The delay coordinates of every sample i with i and i − <paramref name="delay"/> in one segment (never across a
    /// gap). Not thinned: block means over as little as two samples made the bottleneck fits of the sweeps nearest onset
    /// worse (measured on the Morris–Lecar sweeps of <c>NormalFormFit.Bench signal-onsets</c>: a single run's a off by
    /// a factor 10–25, once the onset 20–30 distances to the nearest sweep off). O(n).
    /// </summary>
    private static EmbeddedOrbit Embed(double[] v, double[] t, int[] segOf, int delay)
    {
        var n = v.Length;
        var m = 0;
        for (var i = delay; i < n; i++)
        {
            if (segOf[i] == segOf[i - delay])
            {
                m++;
            }
        }

        var xs = new double[m];
        var ys = new double[m];
        var ts = new double[m];
        var ss = new int[m];
        var k = 0;
        for (var i = delay; i < n; i++)
        {
            if (segOf[i] == segOf[i - delay])
            {
                xs[k] = v[i];
                ys[k] = v[i - delay];
                ts[k] = t[i];
                ss[k] = segOf[i];
                k++;
            }
        }

        return new EmbeddedOrbit(xs, ys, ts, ss);
    }

    /// <summary>
    /// Protophase as arc length along the mean orbit: the orbit's mean point in each of <see cref="TemplateBins"/> bins
    /// of the angle about the centre gives a closed polyline (the mean orbit); each sample is projected onto the nearest
    /// of its segments within <see cref="ProjectionWindow"/> bins of its own, and the protophase is 2π × the arc length
    /// from the polyline's start to that point over the polyline's length, unwrapped with the angle's turn count.
    /// Projection, not integration along the noisy samples, so noise does not accumulate. O(n · window). Also returns
    /// the mean orbit's length (the signal's unit; NaN when the angle is used instead).
    /// </summary>
    private static (double[] Phase, double Length) ArcLengthPhase(double[] x, double[] y, int[] seg, double[] angle)
    {
        var m = x.Length;
        var sx = new double[TemplateBins];
        var sy = new double[TemplateBins];
        var count = new int[TemplateBins];
        var bin = new int[m];
        for (var k = 0; k < m; k++)
        {
            var a = angle[k] - (2 * Math.PI * Math.Floor(angle[k] / (2 * Math.PI)));
            var b = Math.Clamp((int)(a / (2 * Math.PI) * TemplateBins), 0, TemplateBins - 1);
            bin[k] = b;
            sx[b] += x[k];
            sy[b] += y[k];
            count[b]++;
        }

        // Means over TemplateSpan neighbouring bins (sample-weighted), so that the few samples of the fast part do not
        // make the mean orbit zig-zag and lengthen it.
        var tx = new List<double>();
        var ty = new List<double>();
        var nearest = new int[TemplateBins];
        for (var b = 0; b < TemplateBins; b++)
        {
            if (count[b] > 0)
            {
                double mx = 0, my = 0, mc = 0;
                for (var w = -TemplateSpan; w <= TemplateSpan; w++)
                {
                    var j = (b + w + TemplateBins) % TemplateBins;
                    mx += sx[j];
                    my += sy[j];
                    mc += count[j];
                }

                tx.Add(mx / mc);
                ty.Add(my / mc);
            }

            nearest[b] = Math.Max(tx.Count - 1, 0);
        }

        var p = tx.Count;
        if (p < 8)
        {
            return (angle, double.NaN);
        }

        var cum = new double[p + 1];
        for (var j = 0; j < p; j++)
        {
            var next = (j + 1) % p;
            cum[j + 1] = cum[j] + Math.Sqrt(((tx[next] - tx[j]) * (tx[next] - tx[j])) + ((ty[next] - ty[j]) * (ty[next] - ty[j])));
        }

        var length = cum[p];
        if (!(length > 0))
        {
            return (angle, double.NaN);
        }

        // The polyline unrolled over ProjectionWindow segments either side (no modulo in the loop below): segment q runs
        // from point q to point q + 1, point q being template point q − W (mod p) at arc length cum + whole turns.
        const int W = ProjectionWindow;
        var ext = p + (2 * W) + 2;
        var px = new double[ext];
        var py = new double[ext];
        var pc = new double[ext];
        for (var q = 0; q < ext; q++)
        {
            var j = q - W;
            var turns = (int)Math.Floor(j / (double)p);
            var jj = j - (turns * p);
            px[q] = tx[jj];
            py[q] = ty[jj];
            pc[q] = cum[jj] + (turns * length);
        }

        var ux = new double[ext - 1];
        var uy = new double[ext - 1];
        var inv = new double[ext - 1];
        for (var q = 0; q < ext - 1; q++)
        {
            ux[q] = px[q + 1] - px[q];
            uy[q] = py[q + 1] - py[q];
            var len2 = (ux[q] * ux[q]) + (uy[q] * uy[q]);
            inv[q] = len2 > 0 ? 1 / len2 : 0;
        }

        var result = new double[m];
        var scale = 2 * Math.PI / length;
        for (var k = 0; k < m; k++)
        {
            double xk = x[k], yk = y[k];
            var best = double.PositiveInfinity;
            var along = 0.0;
            var q0 = nearest[bin[k]];
            for (var q = q0; q <= q0 + (2 * W); q++)
            {
                double dx0 = xk - px[q], dy0 = yk - py[q];
                var u = ((dx0 * ux[q]) + (dy0 * uy[q])) * inv[q];
                u = u < 0 ? 0 : u > 1 ? 1 : u;
                double dx = (u * ux[q]) - dx0, dy = (u * uy[q]) - dy0;
                var d2 = (dx * dx) + (dy * dy);
                if (d2 < best)
                {
                    best = d2;
                    along = pc[q] + (u * (pc[q + 1] - pc[q]));
                }
            }

            var psi = scale * along;
            if (k == 0 || seg[k] != seg[k - 1])
            {
                result[k] = psi + (2 * Math.PI * Math.Round((angle[k] - psi) / (2 * Math.PI)));
            }
            else
            {
                var d = psi - result[k - 1];
                result[k] = result[k - 1] + d - (2 * Math.PI * Math.Round(d / (2 * Math.PI)));
            }
        }

        return (result, length);
    }

    /// <summary>Median time from each event until the signal falls below <paramref name="rearm"/> (the detector's threshold − hysteresis): the events' width.</summary>
    public static double MedianWidth(double[] t, double[] v, double[] events, double rearm)
    {
        ArgumentNullException.ThrowIfNull(t);
        ArgumentNullException.ThrowIfNull(v);
        ArgumentNullException.ThrowIfNull(events);
        var widths = new List<double>(events.Length);
        var i = 0;
        foreach (var e in events)
        {
            while (i < t.Length && t[i] < e)
            {
                i++;
            }

            var j = i;
            while (j < t.Length && v[j] >= rearm)
            {
                j++;
            }

            if (j < t.Length && j > i)
            {
                widths.Add(t[j - 1] - e);
            }
        }

        if (widths.Count == 0)
        {
            return Trajectory.TypicalStep(t);
        }

        widths.Sort();
        return widths[widths.Count / 2];
    }

    /// <summary>Segment number of every sample.</summary>
    public static int[] SegmentIndex(int n, int[] segmentStarts)
    {
        ArgumentNullException.ThrowIfNull(segmentStarts);
        var seg = new int[n];
        for (var k = 0; k < segmentStarts.Length; k++)
        {
            var s = segmentStarts[k];
            var e = k + 1 < segmentStarts.Length ? segmentStarts[k + 1] : n;
            for (var i = s; i < e; i++)
            {
                seg[i] = k;
            }
        }

        return seg;
    }

    private readonly record struct Centre(double X, double Y, double Backward, double Spread);

    /// <summary>
    /// The points on which the centre is searched: the stretch of the orbit up to its <see cref="CentreCycles"/>-th
    /// event (all of it when shorter), points closer than <see cref="CentreSpacing"/> × the diagonal of the orbit's box to
    /// the last one kept merged into it (the merged time is its weight), NaN between segments; and the events inside.
    /// </summary>
    private static (double[] X, double[] Y, double[] Weight, int Events) CentrePoints(EmbeddedOrbit orbit, double[] events)
    {
        var (x, y, time, seg) = orbit;
        var m = x.Length;
        if (m <= LongRecord)
        {
            return CoarseOrbit(orbit, events);
        }

        var first = 0;
        while (first < events.Length && events[first] < time[0])
        {
            first++;
        }

        var lastEvent = Math.Min(events.Length - 1, first + CentreCycles);
        var end = m;
        if (lastEvent >= first && lastEvent < events.Length && first + CentreCycles < events.Length)
        {
            end = 0;
            while (end < m && time[end] <= events[lastEvent])
            {
                end++;
            }
        }

        double x0 = double.PositiveInfinity, x1 = double.NegativeInfinity, y0 = double.PositiveInfinity, y1 = double.NegativeInfinity;
        for (var k = 0; k < end; k++)
        {
            x0 = Math.Min(x0, x[k]);
            x1 = Math.Max(x1, x[k]);
            y0 = Math.Min(y0, y[k]);
            y1 = Math.Max(y1, y[k]);
        }

        var spacing = CentreSpacing * Math.Sqrt(((x1 - x0) * (x1 - x0)) + ((y1 - y0) * (y1 - y0)));
        var s2 = spacing * spacing;
        var xs = new List<double>();
        var ys = new List<double>();
        var ws = new List<double>();
        double lx = double.NaN, ly = double.NaN;
        for (var k = 0; k < end; k++)
        {
            var dt = k > 0 && seg[k] == seg[k - 1] ? time[k] - time[k - 1] : 0;
            if (k > 0 && seg[k] != seg[k - 1])
            {
                xs.Add(double.NaN);
                ys.Add(double.NaN);
                ws.Add(0);
                lx = double.NaN;
            }

            var dx = x[k] - lx;
            var dy = y[k] - ly;
            if (double.IsNaN(lx) || (dx * dx) + (dy * dy) >= s2)
            {
                xs.Add(x[k]);
                ys.Add(y[k]);
                ws.Add(dt);
                lx = x[k];
                ly = y[k];
            }
            else
            {
                ws[^1] += dt;
            }
        }

        var inside = 0;
        var t0 = time[0];
        var t1 = time[Math.Max(end - 1, 0)];
        foreach (var e in events)
        {
            if (e >= t0 && e <= t1)
            {
                inside++;
            }
        }

        return ([.. xs], [.. ys], [.. ws], inside);
    }

    /// <summary>Records up to this many points search the centre on the whole orbit, block means of at most <see cref="CoarsePoints"/> points; longer ones on the first <see cref="CentreCycles"/> cycles thinned by distance (the cost of the search stays bounded).</summary>
    public const int LongRecord = 200_000;

    private const int CoarsePoints = 20000;

    /// <summary>The whole orbit as block means (blocks within one segment) of at most <see cref="CoarsePoints"/> points, each of weight one, NaN between segments; and the events inside.</summary>
    private static (double[] X, double[] Y, double[] Weight, int Events) CoarseOrbit(EmbeddedOrbit orbit, double[] events)
    {
        var (x, y, time, seg) = orbit;
        var block = Math.Max(1, (int)Math.Ceiling(x.Length / (double)CoarsePoints));
        var xs = new List<double>(CoarsePoints + 8);
        var ys = new List<double>(CoarsePoints + 8);
        double sx = 0, sy = 0;
        var count = 0;
        var current = -1;
        for (var k = 0; k < x.Length; k++)
        {
            if (seg[k] != current && count > 0)
            {
                xs.Add(sx / count);
                ys.Add(sy / count);
                xs.Add(double.NaN);
                ys.Add(double.NaN);
                sx = sy = 0;
                count = 0;
            }

            current = seg[k];
            sx += x[k];
            sy += y[k];
            count++;
            if (count == block)
            {
                xs.Add(sx / count);
                ys.Add(sy / count);
                sx = sy = 0;
                count = 0;
            }
        }

        if (count > 0)
        {
            xs.Add(sx / count);
            ys.Add(sy / count);
        }

        var weights = new double[xs.Count];
        Array.Fill(weights, 1.0);
        var inside = 0;
        foreach (var e in events)
        {
            if (e >= time[0] && e <= time[^1])
            {
                inside++;
            }
        }

        return ([.. xs], [.. ys], weights, inside);
    }

    /// <summary>
    /// The grid point about which the orbit (<see cref="CentrePoints"/>) winds once per event, with a backward fraction
    /// within <see cref="NearlyAsGood"/> of the least, that spreads the orbit's time most evenly over the angle (largest
    /// entropy of the time-weighted histogram of the angle in <see cref="SpreadBins"/> bins): a point that sees the slow
    /// stretch side-on, not along a ray. A 25 × 25 grid over the orbit's box, then a 9 × 9 grid over the best cell and its
    /// neighbours.
    /// </summary>
    private static Centre? ChooseCentre(EmbeddedOrbit orbit, double[] events)
    {
        var (x, y, w, inside) = CentrePoints(orbit, events);
        var expectedTurns = Math.Max(inside, 1);
        double x0 = double.PositiveInfinity, x1 = double.NegativeInfinity, y0 = double.PositiveInfinity, y1 = double.NegativeInfinity;
        for (var k = 0; k < x.Length; k++)
        {
            if (double.IsNaN(x[k]))
            {
                continue;
            }

            x0 = Math.Min(x0, x[k]);
            x1 = Math.Max(x1, x[k]);
            y0 = Math.Min(y0, y[k]);
            y1 = Math.Max(y1, y[k]);
        }

        if (!(x1 > x0 && y1 > y0))
        {
            return null;
        }

        var hx = (x1 - x0) / (Grid + 1);
        var hy = (y1 - y0) / (Grid + 1);
        var candidates = new List<Centre>();
        for (var a = 1; a <= Grid; a++)
        {
            for (var b = 1; b <= Grid; b++)
            {
                if (Score(x, y, w, x0 + (a * hx), y0 + (b * hy), expectedTurns) is { } c)
                {
                    candidates.Add(c);
                }
            }
        }

        if (Pick(candidates) is not { } coarse)
        {
            return null;
        }

        for (var a = -FineGrid / 2; a <= FineGrid / 2; a++)
        {
            for (var b = -FineGrid / 2; b <= FineGrid / 2; b++)
            {
                if (Score(x, y, w, coarse.X + (a * hx / (FineGrid / 2)), coarse.Y + (b * hy / (FineGrid / 2)), expectedTurns) is { } c)
                {
                    candidates.Add(c);
                }
            }
        }

        return Pick(candidates);
    }

    private static Centre? Pick(List<Centre> candidates)
    {
        if (candidates.Count == 0)
        {
            return null;
        }

        var least = candidates.Min(c => c.Backward);
        return candidates.Where(c => c.Backward <= least + NearlyAsGood).MaxBy(c => c.Spread);
    }

    /// <summary>Backward fractions within this of the least are as good: among them the point that spreads the time most evenly over the angle wins.</summary>
    private const double NearlyAsGood = 0.05;

    /// <summary>Angle bins of the time-weighted histogram whose entropy measures how evenly a centre spreads the orbit's time.</summary>
    private const int SpreadBins = 64;

    private static Centre? Score(double[] x, double[] y, double[] weight, double cx, double cy, int expectedTurns)
    {
        double total = 0, forward = 0, backward = 0;
        var prev = double.NaN;
        Span<double> histogram = stackalloc double[SpreadBins];
        var mass = 0.0;
        for (var k = 0; k < x.Length; k++)
        {
            if (double.IsNaN(x[k]))
            {
                prev = double.NaN;
                continue;
            }

            var a = Math.Atan2(y[k] - cy, x[k] - cx);
            histogram[Math.Clamp((int)((a + Math.PI) / (2 * Math.PI) * SpreadBins), 0, SpreadBins - 1)] += weight[k];
            mass += weight[k];
            if (!double.IsNaN(prev))
            {
                var d = a - prev;
                d -= 2 * Math.PI * Math.Round(d / (2 * Math.PI));
                total += d;
                if (d > 0)
                {
                    forward += d;
                }
                else
                {
                    backward -= d;
                }
            }

            prev = a;
        }

        var turns = Math.Abs(total) / (2 * Math.PI);
        if (Math.Abs(turns - expectedTurns) > (0.25 * expectedTurns) + 1 || !(mass > 0))
        {
            return null;
        }

        var entropy = 0.0;
        foreach (var h in histogram)
        {
            if (h > 0)
            {
                var p = h / mass;
                entropy -= p * Math.Log(p);
            }
        }

        var against = total >= 0 ? backward : forward;
        return new Centre(cx, cy, against / (forward + backward), entropy);
    }

    /// <summary>Largest fall of the protophase below its running maximum over points [from, to) (within segments).</summary>
    private static double Backward(double[] phase, int[] seg, int from, int to)
    {
        var worst = 0.0;
        var max = double.NegativeInfinity;
        for (var k = from; k < to; k++)
        {
            if (k > from && seg[k] != seg[k - 1])
            {
                max = double.NegativeInfinity;
            }

            max = Math.Max(max, phase[k]);
            worst = Math.Max(worst, max - phase[k]);
        }

        return worst;
    }

    private static void Drop(bool[] keep, int from, int to, double[] time, List<(double, double)> leftOut)
    {
        if (to <= from)
        {
            return;
        }

        Array.Fill(keep, false, from, to - from);
        leftOut.Add((time[from], time[to - 1]));
    }

    private static Diagnostic NoOrbit(SignalRecording signal, string why) => new(Severity.Warning, "no-signal-orbit",
        $"column '{signal.SignalColumnName}' gives no protophase ({why}): the run keeps its periods from the events only, and the bottleneck route does not use it",
        signal.File);
}
