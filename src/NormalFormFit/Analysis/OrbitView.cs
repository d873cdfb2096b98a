using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>
/// What the orbit figure draws for a run recorded as positions: the samples (at most <see cref="MaxDrawn"/>, evenly
/// thinned), the fitted ellipse, the positions dropped as off the orbit, and where the bottleneck lies on the orbit.
/// </summary>
/// <param name="X">Kept positions, x (thinned).</param>
/// <param name="Y">Kept positions, y (thinned).</param>
/// <param name="RejectedX">Positions dropped as off the orbit, x (all of them, at most <see cref="MaxDrawn"/>).</param>
/// <param name="RejectedY">Positions dropped as off the orbit, y.</param>
/// <param name="Ellipse">The fitted orbit.</param>
/// <param name="BottleneckX">The bottleneck's position, x (NaN when the run has no bottleneck).</param>
/// <param name="BottleneckY">The bottleneck's position, y.</param>
/// <param name="YDown">True when the y axis of the positions points down (image coordinates).</param>
/// <param name="Samples">Positions kept in all (before thinning).</param>
/// <param name="Rejected">Positions dropped as off the orbit in all.</param>
public sealed record OrbitView(double[] X, double[] Y, double[] RejectedX, double[] RejectedY, Ellipse Ellipse, double BottleneckX, double BottleneckY, bool YDown, int Samples, int Rejected)
{
    /// <summary>Most samples drawn per panel: enough to show the orbit and its scatter, few enough for a light SVG.</summary>
    public const int MaxDrawn = 2000;

    /// <summary>
    /// The view of one run. Kept and dropped positions are told apart by time: the phase has a sample at every kept
    /// position's time. The bottleneck is the kept position whose recorded phase lies closest to θ* on the circle (the
    /// analysis negates a decreasing phase, so θ* is matched with the same sign, <paramref name="direction"/>).
    /// </summary>
    /// <param name="positions">The run's positions as read.</param>
    /// <param name="phase">The phase computed from them (kept positions only).</param>
    /// <param name="ellipse">The fitted orbit.</param>
    /// <param name="bottleneckPhase">θ* of the run's bottleneck fit (NaN when none).</param>
    /// <param name="direction">+1, or −1 when the analysis negated the recorded phase.</param>
    public static OrbitView From(PositionRecording positions, PhaseRecording phase, Ellipse ellipse, double bottleneckPhase, int direction)
    {
        ArgumentNullException.ThrowIfNull(positions);
        ArgumentNullException.ThrowIfNull(phase);
        ArgumentNullException.ThrowIfNull(ellipse);
        var kept = new Dictionary<double, double>(phase.Time.Length);
        for (var i = 0; i < phase.Time.Length; i++)
        {
            kept.TryAdd(phase.Time[i], phase.Phase[i]);
        }

        var keepIdx = new List<int>(positions.Time.Length);
        var dropIdx = new List<int>();
        var bestIdx = -1;
        var best = double.PositiveInfinity;
        var target = direction < 0 ? -bottleneckPhase : bottleneckPhase;
        for (var i = 0; i < positions.Time.Length; i++)
        {
            if (!kept.TryGetValue(positions.Time[i], out var theta))
            {
                dropIdx.Add(i);
                continue;
            }

            keepIdx.Add(i);
            if (double.IsFinite(target))
            {
                var d = Math.Abs(Math.IEEERemainder(theta - target, 2 * Math.PI));
                if (d < best)
                {
                    best = d;
                    bestIdx = i;
                }
            }
        }

        var (kx, ky) = Thin(positions, keepIdx);
        var (rx, ry) = Thin(positions, dropIdx);
        return new OrbitView(kx, ky, rx, ry, ellipse,
            bestIdx >= 0 ? positions.X[bestIdx] : double.NaN, bestIdx >= 0 ? positions.Y[bestIdx] : double.NaN,
            positions.YDown, keepIdx.Count, dropIdx.Count);
    }

    /// <summary>The point of the ellipse at parametric angle <paramref name="s"/>: centre + R(tilt)·(A cos s, B sin s).</summary>
    public (double X, double Y) EllipsePoint(double s)
    {
        var (sin, cos) = Math.SinCos(Ellipse.Tilt);
        var u = Ellipse.SemiMajor * Math.Cos(s);
        var v = Ellipse.SemiMinor * Math.Sin(s);
        return (Ellipse.CentreX + (cos * u) - (sin * v), Ellipse.CentreY + (sin * u) + (cos * v));
    }

    private static (double[] X, double[] Y) Thin(PositionRecording p, List<int> idx)
    {
        var stride = Math.Max(1, (int)Math.Ceiling(idx.Count / (double)MaxDrawn));
        var chosen = idx.Where((_, k) => k % stride == 0).ToList();
        return ([.. chosen.Select(i => p.X[i])], [.. chosen.Select(i => p.Y[i])]);
    }
}
