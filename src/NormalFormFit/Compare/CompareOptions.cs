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
    /// Replicates B of the parametric bootstrap (the whole pipeline re-run on runs simulated from the fitted model).
    /// The test is exact at level α when α(B + 1) is a whole number: 19 for 5%, 99 for 1%. Cost grows as B + 1.
    /// </summary>
    public int Replicates { get; init; } = 19;

    /// <summary>
    /// Replicates of the pilot stage (0 = none): when the bias is removed, a first, smaller bootstrap at the
    /// least-squares fit estimates the bias, and the main stage is simulated from the fit with that bias removed, so that
    /// its bias and spread are those of a model nearer the truth. Cost grows by this many pipeline runs.
    /// </summary>
    public int PilotReplicates { get; init; } = 9;

    /// <summary>True (default): the bootstrap estimate of the bias (mostly the reconstruction's smoothing bias) is removed from the parameters and the onset.</summary>
    public bool CorrectBias { get; init; } = true;

    /// <summary>Replicates computed at once (1 = sequential). Results do not depend on it.</summary>
    public int Parallelism { get; init; } = Environment.ProcessorCount;

    /// <summary>Levenberg–Marquardt iterations at most.</summary>
    public int MaxIterations { get; init; } = 200;

    /// <summary>
    /// Seed of the replicates' noise and initial phases. It is mixed with a fingerprint of the data (see
    /// <see cref="ModelComparer"/>), so the same data and seed give the same result, while different data sets draw
    /// independent replicates.
    /// </summary>
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

        if (!(Significance > 0.0 && Significance < 1.0))
        {
            problems.Add("Significance must lie strictly between 0 and 1.");
        }
        else if (Replicates > 100_000 || (Replicates + 1) * Significance < 1.0 - 1e-9)
        {
            problems.Add(string.Create(ic,
                $"{Replicates} replicates cannot reject at level {Significance}: the smallest p-value is 1/(replicates + 1); use at least {Math.Ceiling((1.0 / Significance) - 1.0 - 1e-9)} (and at most 100000)."));
        }

        if (PilotReplicates is < 0 or > 100_000 || PilotReplicates == 1)
        {
            problems.Add(string.Create(ic, $"the pilot stage needs 0 (none) or 2 to 100000 replicates (got {PilotReplicates})."));
        }

        if (Parallelism < 1)
        {
            problems.Add("Parallelism must be at least 1.");
        }

        if (Regions < 2 || Regions > 64)
        {
            problems.Add("Regions must be between 2 and 64.");
        }

        return problems;
    }
}
