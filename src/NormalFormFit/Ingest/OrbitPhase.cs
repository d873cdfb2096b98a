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
/// The fit weights each sample by the arc length it covers, so that the slow part of the orbit does not dominate.
/// Cost O(n).
/// </remarks>
public static class OrbitPhase
{
    /// <summary>Largest RMS relative deviation from the fitted ellipse for the orbit to count as one (3% of the axes).</summary>
    public const double EllipseTolerance = 0.03;

    /// <summary>Scaled radius below which the angle about the centre may run backwards.</summary>
    public const double CentreTolerance = 0.25;

    /// <summary>Converts positions to a phase recording; null (with an error) when no ellipse can be fitted.</summary>
    public static (PhaseRecording? Phase, OrbitSummary? Orbit, IReadOnlyList<Diagnostic> Diagnostics) FromPositions(PositionRecording positions)
    {
        ArgumentNullException.ThrowIfNull(positions);
        var n = positions.Time.Length;
        var x = positions.X;
        var y = positions.Y;
        var diags = new List<Diagnostic>();
        var w = ArcWeights(x, y, positions.SegmentStarts);
        var ellipse = EllipseFit.Fit(x, y, w);
        if (ellipse is null)
        {
            diags.Add(new Diagnostic(Severity.Error, "no-orbit",
                "the positions do not trace a closed orbit (fewer than five distinct points, or all on a line); expected a marker going round: check the x and y columns",
                positions.File));
            return (null, null, diags);
        }

        var phase = new double[n];
        double sr = 0, sw = 0, minR = double.PositiveInfinity;
        var flip = positions.YDown ? -1.0 : 1.0;
        for (var i = 0; i < n; i++)
        {
            var (angle, r) = ellipse.Normalize(x[i], y[i]);
            phase[i] = flip * angle;
            sr += w[i] * (r - 1) * (r - 1);
            sw += w[i];
            minR = Math.Min(minR, r);
        }

        var rms = sw > 0 ? Math.Sqrt(sr / sw) : double.NaN;
        var isEllipse = rms <= EllipseTolerance;
        var advance = 0.0;
        for (var i = 1; i < n; i++)
        {
            var d = phase[i] - phase[i - 1];
            advance += d - (2 * Math.PI * Math.Round(d / (2 * Math.PI)));
        }

        var sense = advance >= 0 ? "counter-clockwise" : "clockwise";
        var ic = CultureInfo.InvariantCulture;
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

        var rec = new PhaseRecording(positions.File, positions.Time, phase, positions.SegmentStarts);
        return (rec, new OrbitSummary(ellipse, rms, minR, isEllipse, sense), diags);
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
