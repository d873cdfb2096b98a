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

    /// <summary>Which smoother a run uses; <see cref="SmoothingMethod.Auto"/> chooses by record length.</summary>
    public SmoothingMethod Method { get; init; } = SmoothingMethod.Auto;

    /// <summary>
    /// With <see cref="SmoothingMethod.Auto"/>, segments with at least this many samples use the penalised
    /// regression spline (docs/scale.md gives the measurements behind the default).
    /// </summary>
    public int PenalizedFrom { get; init; } = 200_000;

    /// <summary>Samples per knot interval of the penalised spline's first basis (refined when GCV asks for more).</summary>
    public double SamplesPerKnot { get; init; } = 16;

    /// <summary>Default options: λ by GCV.</summary>
    public static SmoothingOptions Default { get; } = new();
}

/// <summary>The smoother used for the phase of a run.</summary>
public enum SmoothingMethod
{
    /// <summary>Exact smoothing spline for short segments, penalised regression spline for long ones.</summary>
    Auto,

    /// <summary>Always the cubic smoothing spline with a knot at every sample (<see cref="CubicSmoothingSpline"/>).</summary>
    Exact,

    /// <summary>Always the penalised regression spline with fewer knots (<see cref="PenalizedSpline"/>).</summary>
    Penalized,
}

/// <summary>Stable names of the smoothers in the JSON report and run lines (part of the JSON contract).</summary>
public static class SmoothingMethodNames
{
    /// <summary>The name of <paramref name="method"/>: "exact-spline", "penalized-spline" or "auto".</summary>
    public static string Name(SmoothingMethod method) => method switch
    {
        SmoothingMethod.Exact => "exact-spline",
        SmoothingMethod.Penalized => "penalized-spline",
        SmoothingMethod.Auto => "auto",
        _ => throw new ArgumentOutOfRangeException(nameof(method), method, "unknown smoothing method"),
    };

    /// <summary>The method named <paramref name="name"/>, or null when the name is none of <see cref="Name"/>'s.</summary>
    public static SmoothingMethod? Parse(string? name) => name switch
    {
        "exact-spline" => SmoothingMethod.Exact,
        "penalized-spline" => SmoothingMethod.Penalized,
        "auto" => SmoothingMethod.Auto,
        _ => null,
    };
}
