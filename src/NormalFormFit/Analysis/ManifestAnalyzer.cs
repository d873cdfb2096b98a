using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>Options of a whole analysis.</summary>
public sealed record AnalyzeOptions
{
    /// <summary>How run files are read.</summary>
    public RunReadOptions Read { get; init; } = RunReadOptions.Default;

    /// <summary>Per-run analysis options.</summary>
    public RunOptions Run { get; init; } = RunOptions.Default;

    /// <summary>The manifest's parameter column (header name or 1-based position); null: <c>param</c>, else the only candidate.</summary>
    public string? ParamColumn { get; init; }

    /// <summary>Unit of the control parameter; null: from the manifest (its <c>units</c> column or the parameter column's name).</summary>
    public string? ParamUnit { get; init; }

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

    /// <summary>The codes.</summary>
    public static IReadOnlySet<string> Codes { get; } = new HashSet<string>(StringComparer.Ordinal) { TooFewRuns };
}

/// <summary>Diagnostic codes of a set whose inputs are wrong as a whole (exit code 2, bad input).</summary>
public static class BadSet
{
    /// <summary>
    /// Single-signal runs, none of which has a population of events (three or more, enough for one period): every
    /// signal looks like noise about a level. A silent sweep among firing sweeps is a run that does not turn; a set
    /// with no firing sweep at all cannot be told from a wrong column or an unplugged input.
    /// </summary>
    public const string SignalAllNoise = "signal-all-noise";
}

/// <summary>Analysed runs before they are combined.</summary>
/// <param name="Runs">Per-run results in manifest order.</param>
/// <param name="ParamUnits">Units of the control parameter, when the manifest gave them.</param>
public sealed record RunSet(IReadOnlyList<RunResult> Runs, string? ParamUnits)
{
    /// <summary>Unit of time of every run (runs in other units were converted to it); null when unknown.</summary>
    public string? TimeUnit { get; init; }

    /// <summary>Name of the control parameter from the manifest's header (<c>voltage</c>); null when it is just <c>param</c>.</summary>
    public string? ParamName { get; init; }
}

/// <summary>Manifest → runs → report: the main job, wired from pure stages.</summary>
public static class ManifestAnalyzer
{
    /// <summary>Fewest events in one signal run that make a population of events (three: two intervals, one period with an error).</summary>
    public const int EventPopulation = 3;

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
        var manifest = Manifest.Read(manifestPath, options.ParamColumn);
        if (manifest.Value is null)
        {
            return new Loaded<RunSet>(null, manifest.Diagnostics);
        }

        var entries = manifest.Value.Entries;
        var fullPaths = entries.Select(manifest.Value.FullPathOf).ToArray();
        var units = TimeUnits(manifestPath, entries, fullPaths, options.Read);
        if (units.Value is null)
        {
            return new Loaded<RunSet>(null, units.Diagnostics);
        }

        var readOptions = units.Value.ReadOptions;
        var results = new RunResult?[entries.Count];
        var readDiags = new IReadOnlyList<Diagnostic>[entries.Count];
        var done = 0;
        string Display(ManifestEntry e) => Path.Combine(Path.GetDirectoryName(manifestPath) ?? string.Empty, e.File);
        void AnalyzeRead(int i, Loaded<RunRecording> rec, Ellipse? sharedOrbit, RunOptions runOptions, Loaded<DetectedEvents>? detected)
        {
            var e = entries[i];
            readDiags[i] = rec.Diagnostics;
            if (rec.Value is not null)
            {
                var run = RecordingAnalyzer.Analyze(rec.Value, e.Param, e.File, e.Label, runOptions, rec.Diagnostics, sharedOrbit, detected);
                results[i] = run.Value;
                if (run.Value is null)
                {
                    readDiags[i] = [.. run.Diagnostics.Select(d => d with { File = Display(e) })];
                }
            }
        }

        Loaded<RunRecording> ReadOne(int i) => RunReader.ReadRecording(fullPaths[i], readOptions[i], Display(entries[i]));
        void AnalyzeOne(int i, Ellipse? sharedOrbit) => AnalyzeRead(i, ReadOne(i), sharedOrbit, options.Run, null);
        var parallel = new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, options.Parallelism) };
        if (!options.Run.SignalEvents.Protophase || options.Run.SignalEvents.Embedding is not null)
        {
            Parallel.For(0, entries.Count, parallel, i =>
            {
                AnalyzeOne(i, null);
                progress?.Report(Interlocked.Increment(ref done));
            });
        }
        else
        {
            // A protophase from single signals: one embedding for the whole set (SignalEmbedding.FromRuns), chosen from
            // every signal run's events before any is analysed. Signal runs are held (recording and events) until then;
            // other runs are analysed at once.
            var held = new Loaded<RunRecording>?[entries.Count];
            var detections = new Loaded<DetectedEvents>?[entries.Count];
            Parallel.For(0, entries.Count, parallel, i =>
            {
                var rec = ReadOne(i);
                if (rec.Value is SignalRecording signal)
                {
                    held[i] = rec;
                    detections[i] = SignalEvents.Detect(signal, options.Run.SignalEvents);
                    return;
                }

                AnalyzeRead(i, rec, null, options.Run, null);
                progress?.Report(Interlocked.Increment(ref done));
            });
            var pairs = new List<(SignalRecording, DetectedEvents)>();
            for (var i = 0; i < entries.Count; i++)
            {
                if (held[i]?.Value is SignalRecording signal && detections[i]?.Value is { } found)
                {
                    pairs.Add((signal, found));
                }
            }

            var setEmbedding = options.Run with { SignalEvents = options.Run.SignalEvents with { Embedding = SignalEmbedding.FromRuns(pairs) } };
            Parallel.For(0, entries.Count, parallel, i =>
            {
                if (held[i] is { } rec)
                {
                    held[i] = null;
                    AnalyzeRead(i, rec, null, setEmbedding, detections[i]);
                    detections[i] = null;
                    progress?.Report(Interlocked.Increment(ref done));
                }
            });
        }

        // Positions that do not go round on their own (a rotor at rest) are read on the orbit that the turning runs
        // of the same set trace: the best-fitting one.
        var shared = results.Where(r => r is { Orbit.IsEllipse: true, IsTurning: true }).OrderBy(r => r!.Orbit!.RmsDeviation).FirstOrDefault()?.Orbit!.Ellipse;
        if (shared is not null)
        {
            for (var i = 0; i < entries.Count; i++)
            {
                if (results[i] is null && readDiags[i].Any(d => d.Code == "no-winding") && readDiags[i].All(d => d.Severity != Severity.Error || d.Code == "no-winding"))
                {
                    AnalyzeOne(i, shared);
                }
            }
        }

        var errors = readDiags.SelectMany(d => d).Where(d => d.Severity == Severity.Error).ToList();
        if (errors.Count > 0)
        {
            var firstBad = Array.FindIndex(readDiags, d => d.Any(x => x.Severity == Severity.Error));
            var line = entries[firstBad].Line;
            var context = new Diagnostic(Severity.Info, "named-by-manifest",
                $"run file named on line {line} of the manifest", manifestPath, line);
            return new Loaded<RunSet>(null, [.. errors, context]);
        }

        var paramUnit = options.ParamUnit ?? entries.Select(e => e.Units).FirstOrDefault(u => u is not null);
        var set = new RunSet(results.Select(r => r!).ToList(), paramUnit) { TimeUnit = units.Value.Unit, ParamName = manifest.Value.ParamName };
        return new Loaded<RunSet>(set, [.. manifest.Diagnostics, .. units.Diagnostics]);
    }

    private sealed record UnitPlan(string? Unit, RunReadOptions[] ReadOptions);

    /// <summary>
    /// The unit of time of the set: the one unit every run names (in its time column's header, or by option). Runs
    /// in other units of time (s, ms, µs, ns, min, h) are converted to the first run's unit. A set where some runs
    /// name a unit and others do not is refused: there is no telling how to compare them.
    /// </summary>
    private static Loaded<UnitPlan> TimeUnits(string manifestPath, IReadOnlyList<ManifestEntry> entries, string[] fullPaths, RunReadOptions read)
    {
        var found = new string?[entries.Count];
        Parallel.For(0, entries.Count, i => found[i] = RunReader.TimeUnitOf(fullPaths[i], read));
        var known = found.Where(u => u is not null).Distinct().ToList();
        var options = new RunReadOptions[entries.Count];
        if (known.Count == 0)
        {
            Array.Fill(options, read);
            return new Loaded<UnitPlan>(new UnitPlan(null, options), []);
        }

        // A missing file names no unit either; reading it reports that, not a mix of units.
        var unknown = Enumerable.Range(0, found.Length).FirstOrDefault(i => found[i] is null && File.Exists(fullPaths[i]), -1);
        if (unknown >= 0)
        {
            var named = Array.FindIndex(found, u => u is not null);
            return Loaded.Fail<UnitPlan>(new Diagnostic(Severity.Error, "mixed-time-units",
                $"the run on line {entries[named].Line} gives its time in {found[named]}, the run on line {entries[unknown].Line} ({entries[unknown].File}) does not name a unit; name the unit in every run's time column (e.g. 'time_s', 't [ms]') or pass --time-unit",
                manifestPath, entries[unknown].Line));
        }

        var target = found[0]!;
        var diags = new List<Diagnostic>();
        for (var i = 0; i < entries.Count; i++)
        {
            var factor = found[i] is null ? 1.0 : ColumnNames.SecondsPer(found[i]) / ColumnNames.SecondsPer(target);
            options[i] = read with { TimeScale = double.IsFinite(factor) ? factor : 1.0, TimeUnit = target };
        }

        if (known.Count > 1)
        {
            diags.Add(new Diagnostic(Severity.Info, "time-units-converted",
                $"the runs give their times in {string.Join(", ", known)}; all are converted to {target}", manifestPath));
        }

        return new Loaded<UnitPlan>(new UnitPlan(target, options), diags);
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
        var signals = runs.Where(r => r.Events is not null).ToList();
        if (signals.Count > 0 && signals.All(r => r.Events!.Count < EventPopulation) && runs.All(r => r.Events is not null || !r.IsTurning))
        {
            var columns = string.Join(", ", signals.Select(r => "'" + r.Events!.Column + "'").Distinct());
            var files = signals.Select(r => r.File).ToList();
            var named = string.Join(", ", files.Take(3)) + (files.Count > 3 ? $" and {files.Count - 3} more" : string.Empty);
            var most = signals.Max(r => r.Events!.Count);
            return new Loaded<AnalysisReport>(null,
            [
                new Diagnostic(Severity.Error, BadSet.SignalAllNoise,
                    $"none of the {signals.Count} signal runs ({named}) has a population of events in column {columns} (at most {most} event(s) in a file, {EventPopulation} needed for a period): no file shows excursions of one height standing {2 * Ingest.SignalEvents.ClearOfNoise:G} noise standard deviations above its median, every signal looks like noise about a level; check that the column is the recorded signal (--signal-column) and that the input was connected, or give the level of the events with --event-threshold if they are small",
                    source),
            ]);
        }

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

        var report = OnsetAnalysis.Combine(runs, set.ParamUnits) with { TimeUnit = set.TimeUnit, ParamName = set.ParamName };
        return new Loaded<AnalysisReport>(report, diagnostics);
    }
}
