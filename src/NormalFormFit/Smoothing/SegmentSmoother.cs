namespace NormalFormFit.Smoothing;

/// <summary>What a run's analysis keeps from the smoothing of one segment.</summary>
/// <param name="Lambda">λ in the caller's time units (for the penalised spline, the equivalent ∫f''² weight).</param>
/// <param name="EffectiveDegreesOfFreedom">tr of the influence matrix.</param>
/// <param name="ResidualVariance">Σrᵢ²/(n − tr).</param>
/// <param name="Method">The smoother that was used.</param>
public sealed record SegmentSmoothing(double Lambda, double EffectiveDegreesOfFreedom, double ResidualVariance, SmoothingMethod Method);

/// <summary>
/// Smooths one segment of a phase record into the caller's buffers, choosing between the exact smoothing
/// spline (<see cref="CubicSmoothingSpline"/>) and the penalised regression spline (<see cref="PenalizedSpline"/>)
/// by <see cref="SmoothingOptions.Method"/> and the segment's length. O(n).
/// </summary>
public static class SegmentSmoother
{
    /// <summary>The method used for a segment of <paramref name="samples"/> samples.</summary>
    public static SmoothingMethod Choose(int samples, SmoothingOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        return options.Method switch
        {
            SmoothingMethod.Auto => samples >= options.PenalizedFrom ? SmoothingMethod.Penalized : SmoothingMethod.Exact,
            _ => options.Method,
        };
    }

    /// <summary>Smooths <paramref name="y"/>(<paramref name="t"/>) and writes f and f' at the samples.</summary>
    public static SegmentSmoothing Smooth(ReadOnlySpan<double> t, ReadOnlySpan<double> y, SmoothingOptions options, Span<double> values, Span<double> derivatives)
    {
        ArgumentNullException.ThrowIfNull(options);
        var method = t.Length < 8 ? SmoothingMethod.Exact : Choose(t.Length, options);
        if (method == SmoothingMethod.Penalized)
        {
            var p = PenalizedSpline.Fit(t, y, options, values, derivatives);
            return new SegmentSmoothing(p.Lambda, p.EffectiveDegreesOfFreedom, p.ResidualVariance, method);
        }

        var fit = CubicSmoothingSpline.Fit(t, y, options);
        fit.Values.CopyTo(values);
        fit.FirstDerivatives.CopyTo(derivatives);
        return new SegmentSmoothing(fit.Lambda, fit.EffectiveDegreesOfFreedom, fit.ResidualVariance, SmoothingMethod.Exact);
    }
}
