namespace NormalFormFit.Compare;

/// <summary>A fitted (or held) parameter.</summary>
/// <param name="Name">Its name in the expression, or <c>c0</c> / <c>c1</c> for the map.</param>
/// <param name="Value">The estimate.</param>
/// <param name="StandardError">Standard error (0 when held fixed).</param>
/// <param name="Fixed">True when held at a given value.</param>
public sealed record FittedParameter(string Name, double Value, double StandardError, bool Fixed)
{
    /// <summary>Multiplier of the SE for the 95% interval: the t quantile for the bootstrap's degrees of freedom (1.96 when not set).</summary>
    public double Quantile { get; init; } = 1.96;

    /// <summary>The bootstrap estimate of the bias removed from the least-squares value (0 when none was removed): Value = least-squares value − Bias.</summary>
    public double Bias { get; init; }

    /// <summary>95% interval, value ± Quantile × SE.</summary>
    public Interval Ci95 => new(Value - (Quantile * StandardError), Value + (Quantile * StandardError));
}

/// <summary>How well the model fits one run.</summary>
/// <param name="File">The run file.</param>
/// <param name="Param">Lab parameter μ_lab.</param>
/// <param name="Points">Field bins plus period points of the run.</param>
/// <param name="Statistic">Sum of squared standardised residuals.</param>
/// <param name="Expected">Its expectation for a correct model: the mean of the same sum over the bootstrap replicates.</param>
/// <param name="MeanResidual">Mean field residual (model − data) in units of the replicates' RMS residual: positive when the model is too fast.</param>
/// <param name="PeriodResidual">Residual of the frequency 1/T (model − data) in units of the replicates' RMS; NaN when not used.</param>
public sealed record RunMisfit(string File, double Param, int Points, double Statistic, double Expected, double MeanResidual, double PeriodResidual)
{
    /// <summary>Statistic / Expected: about 1 for a correct model.</summary>
    public double Ratio => Statistic / Expected;
}

/// <summary>How well the model fits one phase region, over all runs.</summary>
/// <param name="From">Start of the region (radians, in the data's phase).</param>
/// <param name="To">End of the region.</param>
/// <param name="Points">Field bins in the region.</param>
/// <param name="Statistic">Sum of squared standardised residuals.</param>
/// <param name="Expected">Its expectation for a correct model (replicates' mean per point × points).</param>
/// <param name="MeanResidual">Mean residual (model − data) in units of the replicates' RMS residual: positive when the model is too fast there.</param>
public sealed record RegionMisfit(double From, double To, int Points, double Statistic, double Expected, double MeanResidual)
{
    /// <summary>Statistic / Expected: about 1 for a correct model.</summary>
    public double Ratio => Statistic / Expected;
}

/// <summary>
/// A reduced phase model θ̇ = f(θ, μ; p) fitted to the reconstructed fields and measured periods of a set of runs,
/// with μ_model = c₀ + c₁·μ_lab, and the verdict on whether it holds.
/// </summary>
/// <param name="Expression">The model as written.</param>
/// <param name="Parameters">The expression's parameters, in order of appearance.</param>
/// <param name="Offset">c₀.</param>
/// <param name="Scale">c₁.</param>
/// <param name="Onset">μ_lab where min_θ f reaches 0, with standard error (NaN when the model has no onset in reach).</param>
/// <param name="OnsetCi95">95% interval of the onset, onset ± t × SE from the replicates.</param>
/// <param name="Statistic">Goodness-of-fit statistic Q = Σ r² over all points.</param>
/// <param name="Expected">Mean of Q over the replicates simulated from the fitted model.</param>
/// <param name="PValue">Monte-Carlo p-value (1 + #{Q* ≥ Q})/(B + 1); NaN when the model stops where a run turns.</param>
/// <param name="Consistent">True when PValue &gt; the chosen significance.</param>
/// <param name="Points">Data points fitted.</param>
/// <param name="Runs">Misfit per run, in input order.</param>
/// <param name="Regions">Misfit per phase region.</param>
/// <param name="WorstRuns">The runs with the largest Ratio, worst first.</param>
/// <param name="WorstRegions">The regions with the largest Ratio, worst first.</param>
/// <param name="Diagnostics">Notes and warnings about the fit.</param>
public sealed record ModelComparison(
    string Expression,
    IReadOnlyList<FittedParameter> Parameters,
    FittedParameter Offset,
    FittedParameter Scale,
    Estimate Onset,
    Interval OnsetCi95,
    double Statistic,
    double Expected,
    double PValue,
    bool Consistent,
    int Points,
    IReadOnlyList<RunMisfit> Runs,
    IReadOnlyList<RegionMisfit> Regions,
    IReadOnlyList<RunMisfit> WorstRuns,
    IReadOnlyList<RegionMisfit> WorstRegions,
    IReadOnlyList<Diagnostic> Diagnostics)
{
    /// <summary>Q of each successful bootstrap replicate: the statistic's distribution for a correct model.</summary>
    public IReadOnlyList<double> ReplicateStatistics { get; init; } = [];

    /// <summary>Replicates that could not be analysed or fitted (counted against the model in the test).</summary>
    public int FailedReplicates { get; init; }

    /// <summary>
    /// True when the main stage's replicates were drawn at the fit less the bias a pilot stage estimated; false when they
    /// were drawn at the fit itself (pilot or bias correction off, too few pilot replicates, a shifted model that stops,
    /// a model that stops, or a planar system).
    /// </summary>
    public bool BiasCorrected { get; init; }

    /// <summary>Levenberg–Marquardt iterations taken.</summary>
    public int Iterations { get; init; }

    /// <summary>How the runs' phase advanced as read; the model is fitted in that convention (not used for a system).</summary>
    public TurningSense Sense { get; init; }

    /// <summary>
    /// True for a planar system (<see cref="PlanarComparer"/>): it is compared on periods, so it has no phase regions and
    /// no turning sense, and the reports leave those out.
    /// </summary>
    public bool IsSystem { get; init; }
}

/// <summary>How the runs' phase advanced as read, in the file's own convention.</summary>
public enum TurningSense
{
    /// <summary>The phase increases in every run.</summary>
    Forward,

    /// <summary>The phase decreases in every run.</summary>
    Backward,

    /// <summary>Some runs one way, some the other.</summary>
    Mixed,
}
