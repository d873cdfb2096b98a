namespace NormalFormFit.Smoothing;

/// <summary>Options of the cubic smoothing spline.</summary>
public sealed record SmoothingOptions
{
    /// <summary>
    /// Fixed smoothing parameter λ of Σ wᵢ(yᵢ − f(tᵢ))² + λ∫f''², in the caller's time units
    /// (the same convention as SciPy's <c>make_smoothing_spline(lam=…)</c>).
    /// Null: chosen by generalised cross-validation.
    /// </summary>
    public double? Lambda { get; init; }

    /// <summary>Default options: λ by GCV.</summary>
    public static SmoothingOptions Default { get; } = new();
}
