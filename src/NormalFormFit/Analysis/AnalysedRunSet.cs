namespace NormalFormFit.Analysis;

/// <summary>
/// A run set together with the reading and analysis options that produced it. Whatever re-analyses runs in the
/// image of these (the model comparison's simulated replicates) takes the options from here, so the two cannot differ.
/// </summary>
/// <param name="Runs">The analysed runs, in manifest order.</param>
/// <param name="Options">The options the runs were read and analysed with.</param>
public sealed record AnalysedRunSet(RunSet Runs, AnalyzeOptions Options)
{
    /// <summary>Runs analysed with the default options (<see cref="AnalyzeOptions.Default"/>), as <see cref="RunAnalyzer.Analyze"/> does without options.</summary>
    /// <param name="runs">The runs.</param>
    /// <returns>The run set with the default options.</returns>
    public static AnalysedRunSet WithDefaultOptions(IReadOnlyList<RunResult> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        return new AnalysedRunSet(new RunSet(runs, null), AnalyzeOptions.Default);
    }
}
