using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>Options of a whole analysis.</summary>
public sealed record AnalyzeOptions
{
    /// <summary>How run files are read.</summary>
    public RunReadOptions Read { get; init; } = RunReadOptions.Default;

    /// <summary>Per-run analysis options.</summary>
    public RunOptions Run { get; init; } = RunOptions.Default;

    /// <summary>Runs analysed at once (1 = sequential). Results do not depend on it.</summary>
    public int Parallelism { get; init; } = Environment.ProcessorCount;

    /// <summary>Defaults.</summary>
    public static AnalyzeOptions Default { get; } = new();
}

/// <summary>Diagnostic codes that mean "valid data, but it cannot answer the question" (exit code 3).</summary>
public static class InsufficientData
{
    /// <summary>Fewer than three usable turning runs.</summary>
    public const string TooFewRuns = "insufficient-runs";
}

/// <summary>Analysed runs before they are combined.</summary>
/// <param name="Runs">Per-run results in manifest order.</param>
/// <param name="ParamUnits">Units of the control parameter, when the manifest gave them.</param>
public sealed record RunSet(IReadOnlyList<RunResult> Runs, string? ParamUnits);

/// <summary>Manifest → runs → report: the main job, wired from pure stages.</summary>
public static class ManifestAnalyzer
{
    /// <summary>
    /// Reads the manifest and every run, analyses the runs (in parallel, results in manifest order) and combines
    /// them. Errors in any input stop the analysis and come back as diagnostics; nothing is written.
    /// </summary>
    public static Loaded<AnalysisReport> Analyze(string manifestPath, AnalyzeOptions? options = null, IProgress<int>? progress = null)
    {
        var runs = AnalyzeRuns(manifestPath, options, progress);
        return runs.Value is null
            ? new Loaded<AnalysisReport>(null, runs.Diagnostics)
            : Combine(runs.Value, manifestPath, runs.Diagnostics);
    }

    /// <summary>
    /// Reads and analyses every run of the manifest (in parallel, results in manifest order) without combining
    /// them: the per-run half of <see cref="Analyze"/>, whose results <see cref="Combine"/> turns into the report.
    /// </summary>
    public static Loaded<RunSet> AnalyzeRuns(string manifestPath, AnalyzeOptions? options = null, IProgress<int>? progress = null)
    {
        options ??= AnalyzeOptions.Default;
        var manifest = Manifest.Read(manifestPath);
        if (manifest.Value is null)
        {
            return new Loaded<RunSet>(null, manifest.Diagnostics);
        }

        var entries = manifest.Value.Entries;
        var fullPaths = entries.Select(manifest.Value.FullPathOf).ToArray();
        var results = new RunResult?[entries.Count];
        var readDiags = new IReadOnlyList<Diagnostic>[entries.Count];
        var done = 0;
        Parallel.For(0, entries.Count, new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, options.Parallelism) }, i =>
        {
            var e = entries[i];
            var display = Path.Combine(Path.GetDirectoryName(manifestPath) ?? string.Empty, e.File);
            var rec = RunReader.ReadRecording(fullPaths[i], options.Read, display);
            readDiags[i] = rec.Diagnostics;
            if (rec.Value is not null)
            {
                var run = RecordingAnalyzer.Analyze(rec.Value, e.Param, e.File, e.Label, options.Run, rec.Diagnostics);
                results[i] = run.Value;
                if (run.Value is null)
                {
                    readDiags[i] = [.. run.Diagnostics.Select(d => d with { File = display })];
                }
            }

            progress?.Report(Interlocked.Increment(ref done));
        });

        var errors = readDiags.SelectMany(d => d).Where(d => d.Severity == Severity.Error).ToList();
        if (errors.Count > 0)
        {
            var firstBad = Array.FindIndex(readDiags, d => d.Any(x => x.Severity == Severity.Error));
            var line = entries[firstBad].Line;
            var context = new Diagnostic(Severity.Info, "named-by-manifest",
                $"run file named on line {line} of the manifest", manifestPath, line);
            return new Loaded<RunSet>(null, [.. errors, context]);
        }

        var set = new RunSet(results.Select(r => r!).ToList(), entries.Select(e => e.Units).FirstOrDefault(u => u is not null));
        return new Loaded<RunSet>(set, manifest.Diagnostics);
    }

    /// <summary>
    /// Combines analysed runs into the report (exit-code-3 diagnostic when too few runs turn). The same for runs
    /// analysed here or read back from run lines written elsewhere (the run lines that the reporting library writes and reads).
    /// </summary>
    /// <param name="set">The runs, in manifest order.</param>
    /// <param name="source">Named in the message when the runs cannot answer.</param>
    /// <param name="diagnostics">Diagnostics to carry into the result.</param>
    public static Loaded<AnalysisReport> Combine(RunSet set, string source, IReadOnlyList<Diagnostic> diagnostics)
    {
        ArgumentNullException.ThrowIfNull(set);
        var runs = set.Runs;
        var usable = OnsetAnalysis.UsableRuns(runs);
        if (usable < OnsetAnalysis.MinimumRuns)
        {
            var notTurning = runs.Count(r => !r.IsTurning);
            var tooShort = runs.Count(r => r.Samples < RunChecks.MinimumSamples);
            var shortNote = tooShort > 0 ? $", {tooShort} of them with fewer than {RunChecks.MinimumSamples} samples, too few to analyse" : string.Empty;
            return new Loaded<AnalysisReport>(null,
            [
                new Diagnostic(Severity.Error, InsufficientData.TooFewRuns,
                    $"only {usable} of {runs.Count} runs turn and can be analysed ({notTurning} do not turn{shortNote}); an onset needs at least {OnsetAnalysis.MinimumRuns}: add runs above onset",
                    source),
            ]);
        }

        if (RunSetSanity.SamePeriods(runs, source) is { } same)
        {
            return new Loaded<AnalysisReport>(null, [same]);
        }

        var report = OnsetAnalysis.Combine(runs, set.ParamUnits);
        return new Loaded<AnalysisReport>(report, diagnostics);
    }
}
