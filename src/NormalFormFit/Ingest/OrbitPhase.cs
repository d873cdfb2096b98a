using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>How positions were turned into a phase.</summary>
/// <param name="Ellipse">The ellipse fitted to the orbit (file coordinates).</param>
/// <param name="RmsDeviation">Arc-weighted RMS of (r − 1), r the radius in the ellipse's axes scaled to 1: 0 on the ellipse.</param>
/// <param name="MinRadius">Smallest scaled radius met (near 0: the orbit passes near the centre and the angle is not monotone).</param>
/// <param name="IsEllipse">RMS deviation ≤ <see cref="OrbitPhase.EllipseTolerance"/>: the phase is the parametric angle of the ellipse.</param>
/// <param name="Sense">"counter-clockwise" or "clockwise": the turning sense as seen with y up (or on screen when y points down).</param>
public sealed record OrbitSummary(Ellipse Ellipse, double RmsDeviation, double MinRadius, bool IsEllipse, string Sense)
{
    /// <summary>True when the phase is a protophase (angle about the fitted centre, axes scaled): a and b are then in its units.</summary>
    public bool IsProtophase => !IsEllipse;
}

/// <summary>Positions → phase: the parametric angle of an ellipse fitted to the orbit.</summary>
/// <remarks>
/// A circle of radius R turning at angle φ, seen by a camera at a tilt and rotated in the image, is (to first order in
/// perspective) an affine image of the circle, hence an ellipse whose parametric angle is φ plus a constant (up to
/// sign). So the angle in the fitted ellipse's own axes, scaled by its semi-axes, recovers the rotation angle. The
/// sample mean is never used as the centre: the point lingers at the bottleneck and pulls the mean toward it.
/// For an orbit that is not an ellipse (a 2-D state space), the same angle is a protophase: a smooth monotone
/// function of the true phase, which leaves onset and periods unchanged and puts a and b in its own units.
/// The fit weights each sample by the arc length it covers, so that the slow part of the orbit does not dominate. When
/// some positions lie far off the fitted ellipse, it is refitted robustly (<see cref="RobustEllipseFit"/>) and those
/// positions are dropped.
/// Cost O(n).
/// </remarks>
public static class OrbitPhase
{
    /// <summary>Largest RMS relative deviation from the fitted ellipse for the orbit to count as one (3% of the axes).</summary>
    public const double EllipseTolerance = 0.03;

    /// <summary>Scaled radius below which the angle about the centre may run backwards.</summary>
    public const double CentreTolerance = 0.25;

    /// <summary>
    /// A sample whose radial departure from the fitted ellipse exceeds this many robust standard deviations (and
    /// <see cref="MinOffOrbit"/>) is a wrong position and is dropped (counted in <see cref="DroppedRows.OffOrbit"/>).
    /// </summary>
    public const double OffOrbitSigmas = 8.0;

    /// <summary>Smallest radial departure (fraction of the axes) that counts as off the orbit.</summary>
    public const double MinOffOrbit = 0.05;

    /// <summary>Fewest of the twelve 30° sectors of the ellipse that the positions must visit to wind round it.</summary>
    public const int MinSectors = 9;

    /// <summary>Converts positions to a phase recording; null (with an error) when no ellipse can be fitted.</summary>
    public static (PhaseRecording? Phase, OrbitSummary? Orbit, IReadOnlyList<Diagnostic> Diagnostics) FromPositions(PositionRecording positions) =>
        FromPositions(positions, null);

    /// <summary>
    /// Converts positions to a phase: fits the ellipse robustly (<see cref="RobustEllipseFit"/>), drops samples far
    /// off it (<see cref="OffOrbitSigmas"/>), checks that the rest wind round it, and takes the parametric angle.
    /// With <paramref name="shared"/> (the orbit other runs of the same set traced, for a run that rests or barely
    /// moves) that ellipse is used instead of a fit, provided the positions lie on it. Null with an error
    /// (<c>no-orbit</c>) when no orbit can be fitted or the positions do not wind round it.
    /// </summary>
    public static (PhaseRecording? Phase, OrbitSummary? Orbit, IReadOnlyList<Diagnostic> Diagnostics) FromPositions(PositionRecording positions, Ellipse? shared)
    {
        ArgumentNullException.ThrowIfNull(positions);
        var n = positions.Time.Length;
        var x = positions.X;
        var y = positions.Y;
        var diags = new List<Diagnostic>();
        var w = ArcWeights(x, y, positions.SegmentStarts);
        // The plain direct fit is the efficient one on clean positions; only when some lie far off it is it redone
        // robustly (Tukey's biweight, with capped arc weights), so that wrong detections do not pull it off. An orbit
        // whose bulk is itself off an ellipse (robust scale above the ellipse tolerance: a state space) is left as fitted.
        var ellipse = shared ?? EllipseFit.Fit(x, y, w);
        var scale = ellipse is null ? double.NaN : RadialScale(ellipse, x, y);
        if (shared is null && ellipse is not null && scale <= EllipseTolerance && AnyBeyond(ellipse, x, y, Math.Max(OffOrbitSigmas * scale, MinOffOrbit)))
        {
            ellipse = RobustEllipseFit.Fit(x, y, CapWeights(w), out scale) ?? ellipse;
        }

        if (ellipse is null)
        {
            diags.Add(NoOrbit(positions.File,
                "the positions do not trace a closed orbit (fewer than five distinct points, or all on a line); expected a marker going round: check the x and y columns"));
            return (null, null, diags);
        }

        // Wrong positions: far off the orbit that the rest trace.
        var limit = scale <= EllipseTolerance ? Math.Max(OffOrbitSigmas * scale, MinOffOrbit) : double.PositiveInfinity;
        var keep = new List<int>(n);
        var angle = new double[n];
        var radius = new double[n];
        for (var i = 0; i < n; i++)
        {
            (angle[i], radius[i]) = ellipse.Normalize(x[i], y[i]);
            if (Math.Abs(radius[i] - 1) <= limit)
            {
                keep.Add(i);
            }
        }

        var offOrbit = n - keep.Count;
        var ic = CultureInfo.InvariantCulture;
        if (keep.Count < 5)
        {
            diags.Add(NoOrbit(positions.File, "the positions do not trace a closed orbit (too few of them lie on any one ellipse); expected a marker going round: check the x and y columns"));
            return (null, null, diags);
        }

        // Winding: the kept positions must go round (most 30° sectors visited) in steps that can be followed.
        var sectors = new bool[12];
        var stride = Math.Max(1, keep.Count / 16384);
        var steps = new List<double>();
        for (var k = 0; k < keep.Count; k++)
        {
            var a = angle[keep[k]];
            sectors[Math.Clamp((int)Math.Floor((a + Math.PI) / (Math.PI / 6)), 0, 11)] = true;
            if (k > 0 && k % stride == 0)
            {
                var d = a - angle[keep[k - 1]];
                steps.Add(Math.Abs(d - (2 * Math.PI * Math.Round(d / (2 * Math.PI)))));
            }
        }

        steps.Sort();
        var typicalStep = steps.Count > 0 ? steps[steps.Count / 2] : 0.0;
        var visited = sectors.Count(v => v);
        if (shared is null && (visited < MinSectors || typicalStep > PhaseChecks.MaxTypicalStep))
        {
            var why = visited < MinSectors
                ? $"they cover {visited} of 12 sectors of 30° round the fitted ellipse"
                : $"the angle round the fitted ellipse jumps by {Numerics.ErrorDigits.Plain(typicalStep, 3)} rad between neighbouring samples in the median";
            diags.Add(NoOrbit(positions.File, string.Create(ic,
                $"the positions do not wind round an orbit ({why}); expected a marker going round, or a run at rest beside runs that turn: check the x and y columns (a single signal against time is not a position pair)")) with
            { Code = "no-winding" });
            return (null, null, diags);
        }

        var phase = new double[keep.Count];
        double sr = 0, sw = 0, minR = double.PositiveInfinity;
        var flip = positions.YDown ? -1.0 : 1.0;
        for (var k = 0; k < keep.Count; k++)
        {
            var i = keep[k];
            phase[k] = flip * angle[i];
            var r = radius[i];
            sr += w[i] * (r - 1) * (r - 1);
            sw += w[i];
            minR = Math.Min(minR, r);
        }

        var rms = sw > 0 ? Math.Sqrt(sr / sw) : double.NaN;
        var isEllipse = rms <= EllipseTolerance;
        var advance = 0.0;
        for (var k = 1; k < phase.Length; k++)
        {
            var d = phase[k] - phase[k - 1];
            advance += d - (2 * Math.PI * Math.Round(d / (2 * Math.PI)));
        }

        var sense = advance >= 0 ? "counter-clockwise" : "clockwise";
        if (!isEllipse)
        {
            diags.Add(new Diagnostic(Severity.Warning, "not-an-ellipse", string.Create(ic,
                $"the orbit is far from an ellipse (RMS deviation {rms:P1} of the axes): the phase is a protophase (angle about the fitted centre, axes scaled); onset and periods do not depend on this choice, a and b are in protophase units"),
                positions.File));
        }

        if (minR < CentreTolerance)
        {
            diags.Add(new Diagnostic(Severity.Warning, "orbit-near-centre", string.Create(ic,
                $"the orbit comes within {minR:P0} of the axes to the fitted centre, where the angle may run backwards: check that the two columns trace one loop per cycle"),
                positions.File));
        }

        if (offOrbit > 0)
        {
            diags.Add(new Diagnostic(Severity.Info, "off-orbit", string.Create(ic,
                $"{offOrbit} position(s) lie more than {limit:P0} of the axes off the orbit the others trace (wrong detections) and are not used"),
                positions.File));
        }

        if (shared is not null)
        {
            diags.Add(new Diagnostic(Severity.Info, "shared-orbit",
                "the positions do not go round on their own: the phase is read on the orbit that the other runs trace", positions.File));
        }

        // Segments carried over to the kept samples.
        var starts = new List<int>();
        var seg = 0;
        var segs = positions.SegmentStarts;
        for (var k = 0; k < keep.Count; k++)
        {
            while (seg < segs.Length && segs[seg] <= keep[k])
            {
                if (starts.Count == 0 || starts[^1] != k)
                {
                    starts.Add(k);
                }

                seg++;
            }
        }

        if (starts.Count == 0 || starts[0] != 0)
        {
            starts.Insert(0, 0);
        }

        var time = offOrbit == 0 ? positions.Time : [.. keep.Select(i => positions.Time[i])];
        var rec = new PhaseRecording(positions.File, time, phase, [.. starts])
        {
            TimeUnit = positions.TimeUnit,
            Dropped = positions.Dropped with { OffOrbit = positions.Dropped.OffOrbit + offOrbit },
        };
        return (rec, new OrbitSummary(ellipse, rms, minR, isEllipse, sense), diags);
    }

    private static Diagnostic NoOrbit(string file, string message) => new(Severity.Error, "no-orbit", message, file);

    /// <summary>Robust scale (1.4826 × MAD, at least <see cref="RobustEllipseFit.MinScale"/>) of the radial departure from <paramref name="ellipse"/>.</summary>
    private static double RadialScale(Ellipse ellipse, double[] x, double[] y)
    {
        var dep = new double[x.Length];
        for (var i = 0; i < x.Length; i++)
        {
            dep[i] = ellipse.Normalize(x[i], y[i]).Radius - 1;
        }

        return Math.Max(RobustEllipseFit.RobustScale(RobustEllipseFit.Strided(dep)), RobustEllipseFit.MinScale);
    }

    private static bool AnyBeyond(Ellipse ellipse, double[] x, double[] y, double limit)
    {
        for (var i = 0; i < x.Length; i++)
        {
            if (Math.Abs(ellipse.Normalize(x[i], y[i]).Radius - 1) > limit)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// A wrong position far off the orbit weighs itself and its neighbours heavily by arc length: each weight is capped
    /// at five times the median weight (from at most 16 385 evenly spread samples).
    /// </summary>
    private static double[] CapWeights(double[] w)
    {
        var sample = RobustEllipseFit.Strided(w).ToArray();
        Array.Sort(sample);
        var cap = sample.Length > 0 ? 5 * sample[sample.Length / 2] : 0.0;
        return cap > 0 ? [.. w.Select(v => Math.Min(v, cap))] : w;
    }

    /// <summary>Half the distance between each sample's neighbours (one-sided at segment ends).</summary>
    private static double[] ArcWeights(double[] x, double[] y, int[] segments)
    {
        var n = x.Length;
        var w = new double[n];
        for (var k = 0; k < segments.Length; k++)
        {
            var s = segments[k];
            var e = k + 1 < segments.Length ? segments[k + 1] : n;
            for (var i = s; i < e; i++)
            {
                var lo = i > s ? i - 1 : i;
                var hi = i + 1 < e ? i + 1 : i;
                w[i] = 0.5 * Math.Sqrt(((x[hi] - x[lo]) * (x[hi] - x[lo])) + ((y[hi] - y[lo]) * (y[hi] - y[lo])));
            }
        }

        return w;
    }
}
