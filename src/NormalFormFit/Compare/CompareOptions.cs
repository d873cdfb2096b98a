using System.Globalization;

namespace NormalFormFit.Compare;

/// <summary>Settings of a model comparison. The defaults work for models whose parameters are of order one.</summary>
public sealed record CompareOptions
{
    /// <summary>Starting values of free parameters by name; a parameter not named here starts at 1.</summary>
    public IReadOnlyDictionary<string, double> Start { get; init; } = new Dictionary<string, double>(StringComparer.Ordinal);

    /// <summary>Parameters held at a value by name (not fitted; standard error 0).</summary>
    public IReadOnlyDictionary<string, double> Fixed { get; init; } = new Dictionary<string, double>(StringComparer.Ordinal);

    /// <summary>Offset c₀ of μ_model = c₀ + c₁·μ_lab held at this value; null fits it.</summary>
    public double? FixedOffset { get; init; }

    /// <summary>Scale c₁ of μ_model = c₀ + c₁·μ_lab held at this value; null fits it.</summary>
    public double? FixedScale { get; init; }

    /// <summary>Starting value of c₀ when it is fitted.</summary>
    public double StartOffset { get; init; }

    /// <summary>Starting value of c₁ when it is fitted.</summary>
    public double StartScale { get; init; } = 1.0;

    /// <summary>True (default): measured periods enter the fit beside the fields.</summary>
    public bool UsePeriods { get; init; } = true;

    /// <summary>
    /// True (default): the fitted model is passed through the same reconstruction as the data (spline with each
    /// run's λ, same bins) and the fields are corrected for the smoothing bias found, then the model is refitted.
    /// </summary>
    public bool CorrectSmoothingBias { get; init; } = true;

    /// <summary>Levenberg–Marquardt iterations at most.</summary>
    public int MaxIterations { get; init; } = 200;

    /// <summary>Draws of the parameters for the onset interval.</summary>
    public int OnsetDraws { get; init; } = 400;

    /// <summary>Seed of the onset draws (results are reproducible).</summary>
    public int Seed { get; init; } = 20260601;

    /// <summary>Level of the goodness-of-fit test: the model is rejected when p &lt; this.</summary>
    public double Significance { get; init; } = 0.05;

    /// <summary>Phase regions, of equal width, in which residuals are summarised.</summary>
    public int Regions { get; init; } = 8;

    /// <summary>How many worst runs and regions are named.</summary>
    public int WorstCount { get; init; } = 3;

    /// <summary>Defaults.</summary>
    public static CompareOptions Default { get; } = new();

    /// <summary>Problems that make these options unusable; empty when they are fine.</summary>
    public IReadOnlyList<string> Validate()
    {
        var ic = CultureInfo.InvariantCulture;
        var problems = new List<string>();
        foreach (var (name, value) in Start.Concat(Fixed))
        {
            if (!double.IsFinite(value))
            {
                problems.Add(string.Create(ic, $"the value of '{name}' must be a finite number (got {value})."));
            }
        }

        if (FixedOffset is { } c0 && !double.IsFinite(c0))
        {
            problems.Add("the fixed offset c0 must be finite.");
        }

        if (FixedScale is { } c1 && (!double.IsFinite(c1) || c1 == 0.0))
        {
            problems.Add("the fixed scale c1 must be finite and not zero.");
        }

        if (MaxIterations < 1)
        {
            problems.Add("MaxIterations must be at least 1.");
        }

        if (OnsetDraws < 100)
        {
            problems.Add("OnsetDraws must be at least 100 for a 95% interval.");
        }

        if (!(Significance > 0.0 && Significance < 1.0))
        {
            problems.Add("Significance must lie strictly between 0 and 1.");
        }

        if (Regions < 2 || Regions > 64)
        {
            problems.Add("Regions must be between 2 and 64.");
        }

        return problems;
    }
}
