using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>
/// What the orbit figure draws for a single-signal recording whose protophase ran (<see cref="SignalPhase"/>): the
/// delay-embedded samples (s(t), s(t − delay)) used (at most <see cref="MaxDrawn"/>, evenly thinned), those of the
/// cycles left out, the mean orbit the protophase runs along, the centre of the angle that orders it, and where the
/// bottleneck lies on the mean orbit. All coordinates are in the signal's unit.
/// </summary>
/// <param name="X">Embedded samples used, s(t) (thinned).</param>
/// <param name="Y">Embedded samples used, s(t − delay).</param>
/// <param name="LeftOutX">Embedded samples of the stretches left out, s(t) (thinned).</param>
/// <param name="LeftOutY">Embedded samples of the stretches left out, s(t − delay).</param>
/// <param name="MeanX">The mean orbit, s(t): the mean of the samples used in each of <see cref="MeanBins"/> bins of the protophase, in order, closed; empty when fewer than <see cref="MinCoverage"/> of the bins have samples.</param>
/// <param name="MeanY">The mean orbit, s(t − delay).</param>
/// <param name="CentreX">Centre of the angle that orders the orbit, s(t).</param>
/// <param name="CentreY">Centre of the angle, s(t − delay).</param>
/// <param name="BottleneckX">The bottleneck's point on the mean orbit, s(t) (NaN when the run has no bottleneck).</param>
/// <param name="BottleneckY">The bottleneck's point on the mean orbit, s(t − delay).</param>
/// <param name="Delay">The embedding delay in the run's time unit.</param>
/// <param name="Samples">Embedded samples used in all (before thinning).</param>
/// <param name="LeftOut">Embedded samples left out in all.</param>
/// <param name="Cycles">Whole cycles (event to event) checked.</param>
/// <param name="CyclesLeftOut">Cycles left out.</param>
public sealed record SignalOrbitView(
    double[] X,
    double[] Y,
    double[] LeftOutX,
    double[] LeftOutY,
    double[] MeanX,
    double[] MeanY,
    double CentreX,
    double CentreY,
    double BottleneckX,
    double BottleneckY,
    double Delay,
    int Samples,
    int LeftOut,
    int Cycles,
    int CyclesLeftOut)
{
    /// <summary>Most samples drawn per panel and kind (used, left out): enough to show the orbit and its scatter, few enough for a light SVG.</summary>
    public const int MaxDrawn = 2000;

    /// <summary>Bins of the protophase over one turn in which the mean orbit is drawn.</summary>
    public const int MeanBins = 180;

    /// <summary>Fewest bins, as a fraction of <see cref="MeanBins"/>, with samples for a mean orbit to be drawn.</summary>
    public const double MinCoverage = 0.9;

    /// <summary>
    /// The view of one run. A sample is used when the protophase has a sample at its time (both time arrays are
    /// increasing, so one merge pass finds them); one not used is left out when its time lies in a stretch the
    /// protophase left out (<see cref="SignalOrbit.LeftOutTimes"/>). The mean orbit is the mean embedded point in each
    /// bin of the protophase modulo 2π, so it is the curve the protophase measures arc length along, as the samples
    /// scatter about it. The bottleneck is the mean orbit's point in the bin of θ* (the analysis negates a decreasing
    /// phase, so θ* is matched with the same sign, <paramref name="direction"/>). O(n).
    /// </summary>
    /// <param name="signal">The run's signal as read.</param>
    /// <param name="phase">The protophase computed from it.</param>
    /// <param name="orbit">The embedding and its centre.</param>
    /// <param name="bottleneckPhase">θ* of the run's bottleneck fit (NaN when none).</param>
    /// <param name="direction">+1, or −1 when the analysis negated the recorded phase.</param>
    public static SignalOrbitView From(SignalRecording signal, PhaseRecording phase, SignalOrbit orbit, double bottleneckPhase, int direction)
    {
        ArgumentNullException.ThrowIfNull(signal);
        ArgumentNullException.ThrowIfNull(phase);
        ArgumentNullException.ThrowIfNull(orbit);
        var t = signal.Time;
        var v = signal.Values;
        var d = orbit.DelaySamples;
        var segOf = SignalPhase.SegmentIndex(v.Length, signal.SegmentStarts);
        var used = new List<int>(phase.Time.Length);
        var usedPhase = new List<double>(phase.Time.Length);
        var leftOut = new List<int>();
        var stretches = orbit.LeftOutTimes.OrderBy(s => s.Start).ToArray();
        var p = 0;
        var s = 0;
        for (var i = Math.Max(d, 0); i < v.Length; i++)
        {
            if (segOf[i] != segOf[i - d])
            {
                continue;
            }

            while (p < phase.Time.Length && phase.Time[p] < t[i])
            {
                p++;
            }

            if (p < phase.Time.Length && phase.Time[p] == t[i])
            {
                used.Add(i);
                usedPhase.Add(phase.Phase[p]);
                continue;
            }

            while (s < stretches.Length && stretches[s].End < t[i])
            {
                s++;
            }

            if (s < stretches.Length && stretches[s].Start <= t[i])
            {
                leftOut.Add(i);
            }
        }

        // Mean orbit: the mean embedded point per bin of the protophase over one turn.
        var sx = new double[MeanBins];
        var sy = new double[MeanBins];
        var count = new int[MeanBins];
        for (var k = 0; k < used.Count; k++)
        {
            var b = Bin(usedPhase[k]);
            sx[b] += v[used[k]];
            sy[b] += v[used[k] - d];
            count[b]++;
        }

        var mx = new List<double>(MeanBins + 1);
        var my = new List<double>(MeanBins + 1);
        for (var b = 0; b < MeanBins; b++)
        {
            if (count[b] > 0)
            {
                mx.Add(sx[b] / count[b]);
                my.Add(sy[b] / count[b]);
            }
        }

        // A mean orbit from a few scattered bins (most cycles left out) would be a polygon through the gaps, not the
        // curve the protophase ran along: none is drawn then.
        if (mx.Count < MinCoverage * MeanBins)
        {
            mx.Clear();
            my.Clear();
        }

        if (mx.Count > 0)
        {
            mx.Add(mx[0]);
            my.Add(my[0]);
        }

        var bx = double.NaN;
        var by = double.NaN;
        if (double.IsFinite(bottleneckPhase) && mx.Count > 0)
        {
            // The bin of θ*, or the nearest bin with samples.
            var target = Bin(direction < 0 ? -bottleneckPhase : bottleneckPhase);
            for (var w = 0; w <= MeanBins / 2; w++)
            {
                var hit = new[] { target - w, target + w }.Select(j => ((j % MeanBins) + MeanBins) % MeanBins).FirstOrDefault(j => count[j] > 0, -1);
                if (hit >= 0)
                {
                    bx = sx[hit] / count[hit];
                    by = sy[hit] / count[hit];
                    break;
                }
            }
        }

        var (ux, uy) = Thin(v, used, d);
        var (lx, ly) = Thin(v, leftOut, d);
        return new SignalOrbitView(ux, uy, lx, ly, [.. mx], [.. my], orbit.CentreX, orbit.CentreY, bx, by, orbit.Delay,
            used.Count, leftOut.Count, orbit.Cycles, orbit.CyclesLeftOut);
    }

    private static int Bin(double theta)
    {
        var a = theta - (2 * Math.PI * Math.Floor(theta / (2 * Math.PI)));
        return Math.Clamp((int)(a / (2 * Math.PI) * MeanBins), 0, MeanBins - 1);
    }

    private static (double[] X, double[] Y) Thin(double[] v, List<int> idx, int delay)
    {
        var stride = Math.Max(1, (int)Math.Ceiling(idx.Count / (double)MaxDrawn));
        var chosen = idx.Where((_, k) => k % stride == 0).ToList();
        return ([.. chosen.Select(i => v[i])], [.. chosen.Select(i => v[i - delay])]);
    }
}
