using System.CommandLine;
using System.Globalization;
using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Reporting;
using CompareOptions = NormalFormFit.Compare.CompareOptions;

namespace NormalFormFit.Cli;

internal static class CompareCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        var manifest = new Argument<string>("manifest") { Description = "CSV with header 'file,param' naming one run file per parameter value" };
        var model = new Option<string>("--model") { Description = "the reduced model θ̇ = f(theta, mu; parameters), e.g. 'mu - a*sin(theta)', or a planar system of two equations \"v' = …; w' = …\" with --observe (see docs/model-expressions.md)", Required = true };
        var observe = new Option<string?>("--observe") { Description = "for a planar system: the variable the runs recorded as their signal, e.g. v" };
        var initial = new Option<string?>("--initial") { Description = "for a planar system: the state every simulation starts from, e.g. v=-40,w=0 (default all 0)" };
        var start = new Option<string?>("--start") { Description = "starting values of parameters, e.g. a=0.8,k=0.1 (others start at 1)" };
        var fix = new Option<string?>("--fix") { Description = "hold parameters at values, e.g. k=0" };
        var c0 = new Option<double?>("--c0") { Description = "hold the offset of μ_model = c0 + c1·μ_lab at this value" };
        var c1 = new Option<double?>("--c1") { Description = "hold the scale of μ_model = c0 + c1·μ_lab at this value" };
        var noPeriods = new Option<bool>("--no-periods") { Description = "fit the fields only, leaving out the measured periods" };
        var replicates = new Option<int>("--replicates") { Description = "run sets simulated from the fitted model for the test and the errors (19 gives an exact 5% test; 99 a 1% test)", DefaultValueFactory = _ => CompareOptions.Default.Replicates };
        var pilot = new Option<int>("--pilot") { Description = "replicates of the pilot stage, which centres the main replicates on the bias-corrected fit (0 turns it off)", DefaultValueFactory = _ => CompareOptions.Default.PilotReplicates };
        var seed = new Option<int>("--seed") { Description = "seed of the simulated replicates, mixed with a fingerprint of the data (the same data and seed give the same result)", DefaultValueFactory = _ => CompareOptions.Default.Seed };
        var outDir = new Option<string?>("--out") { Description = "also write the full report to folder DIR: the analysis report with a section on the model, its figure, model.json" };
        var json = new Option<string?>("--json") { Description = "also write the JSON report to FILE ('-' for standard output, which then carries only the JSON)" };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var verbose = new Option<bool>("--verbose") { Description = "print details of internal errors" };
        var reading = new ReadingOptions();
        var cmd = new Command("compare", "Check a reduced phase model against the runs: fitted parameters, onset, verdict, worst runs and phase regions")
        {
            manifest, model, observe, initial, start, fix, c0, c1, noPeriods, replicates, pilot, seed, json, outDir, quiet, verbose,
        };
        reading.AddTo(cmd);
        cmd.SetAction(pr =>
        {
            if (reading.Check(pr, stderr) is { } badColumn)
            {
                return badColumn;
            }

            var text = pr.GetValue(model)!;
            PlanarModel? system = null;
            ModelExpression? phaseModel = null;
            if (PlanarModel.LooksLikeSystem(text))
            {
                var planar = PlanarModel.Parse(text, pr.GetValue(observe));
                if (planar.Value is null)
                {
                    Report(stderr, planar.Diagnostics, text);
                    return ExitCodes.BadInput;
                }

                system = planar.Value;
                if (pr.GetValue(outDir) is not null)
                {
                    stderr.WriteLine("nffit: usage: --out: the report folder is not written for a planar system yet; use --json FILE for the full result");
                    return ExitCodes.BadInput;
                }

                // A system is compared on the runs' periods alone and its replicates have no pilot stage: both options
                // would be silently without effect, so they are refused.
                if (pr.GetValue(noPeriods))
                {
                    stderr.WriteLine("nffit: usage: --no-periods: a planar system is compared on the runs' periods and on where they are silent; without the periods nothing is left to compare: leave --no-periods out");
                    return ExitCodes.BadInput;
                }

                if (pr.GetResult(pilot) is { Implicit: false })
                {
                    stderr.WriteLine("nffit: usage: --pilot: a planar system's replicates are drawn at the fit itself, with no pilot stage (docs/compare-notes.md, \"Planar systems\"): leave --pilot out");
                    return ExitCodes.BadInput;
                }
            }
            else
            {
                if (pr.GetValue(observe) is not null || pr.GetValue(initial) is not null)
                {
                    stderr.WriteLine($"nffit: usage: {(pr.GetValue(observe) is not null ? "--observe" : "--initial")} belongs to a planar system (two equations v' = …; w' = …), but --model is a phase model θ̇ = f(theta, mu): leave it out, or write the model as a system");
                    return ExitCodes.BadInput;
                }

                var parsed = ModelExpression.Parse(text);
                if (parsed.Value is null)
                {
                    Report(stderr, parsed.Diagnostics, text);
                    return ExitCodes.BadInput;
                }

                var missing = ModelRequirements.Check(parsed.Value).Where(d => d.Severity == Severity.Error).ToList();
                if (missing.Count > 0)
                {
                    Report(stderr, missing, text);
                    return ExitCodes.BadInput;
                }

                phaseModel = parsed.Value;
            }

            (double, double)? initialState = null;
            if (system is not null && !TryInitialState(pr.GetValue(initial), system, stderr, out initialState))
            {
                return ExitCodes.BadInput;
            }

            if (!TryAssignments(pr.GetValue(start), "--start", stderr, out var starts) || !TryAssignments(pr.GetValue(fix), "--fix", stderr, out var fixeds)
                || !TryMapValue(fixeds, "c0", pr.GetValue(c0), stderr, out var fixedOffset) || !TryMapValue(fixeds, "c1", pr.GetValue(c1), stderr, out var fixedScale))
            {
                return ExitCodes.BadInput;
            }

            // The map μ_model = c0 + c1·μ_lab has its own two names in --start and --fix.
            var startOffset = starts.Remove("c0", out var so) ? so : CompareOptions.Default.StartOffset;
            var startScale = starts.Remove("c1", out var ss) ? ss : CompareOptions.Default.StartScale;

            var analyzeOptions = reading.Bind(pr, AnalyzeOptions.Default);
            if (analyzeOptions.Run.SignalEvents.Validate() is { } badEvents)
            {
                stderr.WriteLine($"nffit: usage: {badEvents}");
                return ExitCodes.BadInput;
            }

            var options = new CompareOptions
            {
                Start = starts,
                Fixed = fixeds,
                FixedOffset = fixedOffset,
                FixedScale = fixedScale,
                StartOffset = startOffset,
                StartScale = startScale,
                UsePeriods = !pr.GetValue(noPeriods),
                Replicates = pr.GetValue(replicates),
                PilotReplicates = pr.GetValue(pilot),
                Seed = pr.GetValue(seed),
            };
            return system is not null
                ? ExecuteSystem(pr.GetValue(manifest)!, system, initialState, options, pr.GetValue(json), pr.GetValue(quiet), stdout, stderr, analyzeOptions)
                : Execute(pr.GetValue(manifest)!, phaseModel!, options, pr.GetValue(json), pr.GetValue(quiet), stdout, stderr, pr.GetValue(outDir), analyzeOptions);
        });
        return cmd;
    }

    internal static int Execute(string manifestPath, ModelExpression expression, CompareOptions options, string? jsonPath, bool quiet, TextWriter stdout, TextWriter stderr, string? outDir = null, AnalyzeOptions? analyzeOptions = null)
    {
        var outputs = PlannedOutput.OfReport(outDir, jsonPath);

        if (CommandGuard.ManifestCommand(manifestPath, outputs, stderr) is { } refused)
        {
            return refused;
        }

        // One set of reading and analysis options for the runs and, through AnalysedRunSet, for the replicates.
        analyzeOptions ??= AnalyzeOptions.Default;
        analyzeOptions = analyzeOptions with { Run = analyzeOptions.Run with { KeepSampleTimes = true } };
        var analysis = ManifestAnalyzer.Analyze(manifestPath, analyzeOptions);
        if (analysis.Value is null)
        {
            Report(stderr, analysis.Diagnostics, null);
            return analysis.Diagnostics.Any(e => InsufficientData.Codes.Contains(e.Code) || RunSetSanity.Codes.Contains(e.Code)) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
        }

        var runs = new AnalysedRunSet(new RunSet(analysis.Value.Runs, analysis.Value.ParamUnits), analyzeOptions);
        var result = ModelComparer.Compare(runs, expression, options);
        if (result.Value is null)
        {
            Report(stderr, result.Diagnostics, null);
            return result.Diagnostics.Any(d => d.Code is CompareFailures.TooFewPoints or CompareFailures.CannotFit or CompareFailures.NoAnswer) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
        }

        var c = result.Value;
        if (outDir is not null && !CommandOutput.TryWriteFolder(outDir, stderr, () => ReportFolder.Write(outDir, analysis.Value, Path.GetFileName(manifestPath), model: c)))
        {
            return ExitCodes.BadInput;
        }

        if (jsonPath is not null && !CommandOutput.TryWriteJson(jsonPath, s => ComparisonJson.Write(c, s, NffitApp.Version, analysis.Value.ParamUnits, analysis.Value.TimeUnit), stdout, stderr))
        {
            return ExitCodes.BadInput;
        }

        if (jsonPath != "-" && !quiet)
        {
            stdout.Write(ComparisonText.Format(c, analysis.Value.ParamUnits));
        }

        return ExitCodes.Ok;
    }

    /// <summary>Compares a planar system with the runs of a manifest (signal recordings): text, or JSON as for a phase model.</summary>
    internal static int ExecuteSystem(string manifestPath, PlanarModel system, (double, double)? initial, CompareOptions options, string? jsonPath, bool quiet, TextWriter stdout, TextWriter stderr, AnalyzeOptions? analyzeOptions = null)
    {
        var outputs = PlannedOutput.OfReport(null, jsonPath);
        if (CommandGuard.ManifestCommand(manifestPath, outputs, stderr) is { } refused)
        {
            return refused;
        }

        analyzeOptions ??= AnalyzeOptions.Default;
        analyzeOptions = analyzeOptions with { Run = analyzeOptions.Run with { KeepSampleTimes = true } };
        var analysis = ManifestAnalyzer.Analyze(manifestPath, analyzeOptions);
        if (analysis.Value is null)
        {
            Report(stderr, analysis.Diagnostics, null);
            return analysis.Diagnostics.Any(e => InsufficientData.Codes.Contains(e.Code) || RunSetSanity.Codes.Contains(e.Code)) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
        }

        var runs = new AnalysedRunSet(new RunSet(analysis.Value.Runs, analysis.Value.ParamUnits), analyzeOptions);
        var result = PlanarComparer.Compare(runs, system, options, initial);
        if (result.Value is null)
        {
            Report(stderr, result.Diagnostics, null);
            return result.Diagnostics.Any(d => d.Code is CompareFailures.TooFewPoints or CompareFailures.CannotFit or CompareFailures.NoAnswer) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
        }

        var c = result.Value;
        if (jsonPath is not null && !CommandOutput.TryWriteJson(jsonPath, s => ComparisonJson.Write(c, s, NffitApp.Version), stdout, stderr))
        {
            return ExitCodes.BadInput;
        }

        if (jsonPath != "-" && !quiet)
        {
            stdout.Write(SystemText(c, system));
        }

        return ExitCodes.Ok;
    }

    /// <summary>The comparison of a planar system as plain text: parameters, onset, verdict, worst runs by period, diagnostics, caution.</summary>
    internal static string SystemText(ModelComparison c, PlanarModel system)
    {
        var ic = CultureInfo.InvariantCulture;
        var w = new StringWriter(ic);
        w.WriteLine($"system  {string.Join("; ", system.Text.Split(['\n', ';'], StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries))}");
        w.WriteLine($"recorded  {system.Variables[system.Observed]} (events and periods of the signal)");
        foreach (var p in c.Parameters.Append(c.Offset).Append(c.Scale))
        {
            w.WriteLine(p.Fixed
                ? string.Create(ic, $"  {p.Name,-10} {Numerics.ErrorDigits.Plain(p.Value, 6),12}  (held)")
                : string.Create(ic, $"  {p.Name,-10} {Numerics.ErrorDigits.Plain(p.Value, 6),12}  ± {Numerics.ErrorDigits.Plain(p.StandardError, 2)}   95% [{Numerics.ErrorDigits.Plain(p.Ci95.Low, 6)}, {Numerics.ErrorDigits.Plain(p.Ci95.High, 6)}]"));
        }

        w.WriteLine(string.Create(ic, $"onset  μ_lab = {Numerics.ErrorDigits.Plain(c.Onset.Value, 6)} ± {Numerics.ErrorDigits.Plain(c.Onset.StandardError, 2)}   95% [{Numerics.ErrorDigits.Plain(c.OnsetCi95.Low, 6)}, {Numerics.ErrorDigits.Plain(c.OnsetCi95.High, 6)}]  (where the limit cycle appears)"));
        var replicates = c.ReplicateStatistics.Count + c.FailedReplicates;
        w.WriteLine(replicates == 0
            ? string.Create(ic, $"verdict  {(c.Consistent ? "consistent with the data" : "REJECTED by the data")}  (Q = {Numerics.ErrorDigits.Plain(c.Statistic, 4)}; no run sets simulated: the fitted system contradicts a run outright, see the notes)")
            : string.Create(ic, $"verdict  {(c.Consistent ? "consistent with the data" : "REJECTED by the data")}  (Q = {Numerics.ErrorDigits.Plain(c.Statistic, 4)}; {replicates} simulated from the fit: mean {Numerics.ErrorDigits.Plain(c.Expected, 4)}, largest {Numerics.ErrorDigits.Plain(c.ReplicateStatistics.Count > 0 ? c.ReplicateStatistics.Max() : double.NaN, 4)}; p = {Numerics.ErrorDigits.Plain(c.PValue, 2)})"));
        w.WriteLine("worst runs (squared period residual over its mean in the simulated replicates; about 1 is a good fit):");
        foreach (var r in c.WorstRuns)
        {
            w.WriteLine(string.Create(ic, $"  {r.File}  μ = {Numerics.ErrorDigits.Plain(r.Param, 6)}  {r.Ratio:F2}  model frequency {(r.PeriodResidual > 0 ? "too high" : "too low")} by {Math.Abs(r.PeriodResidual):F2} (replicate RMS)"));
        }

        foreach (var d in c.Diagnostics)
        {
            w.WriteLine(d.ToString());
        }

        w.WriteLine(TextReport.Caution);
        return w.ToString();
    }

    /// <summary>Parses <c>--initial v=…,w=…</c> for the system's variables (a variable not named starts at 0).</summary>
    private static bool TryInitialState(string? text, PlanarModel system, TextWriter stderr, out (double, double)? state)
    {
        state = null;
        if (!TryAssignments(text, "--initial", stderr, out var values))
        {
            return false;
        }

        foreach (var name in values.Keys.Where(n => !system.Variables.Contains(n)))
        {
            stderr.WriteLine($"nffit: usage: --initial: '{name}' is not a variable of the system; its variables are {system.Variables[0]} and {system.Variables[1]}");
            return false;
        }

        state = (values.GetValueOrDefault(system.Variables[0]), values.GetValueOrDefault(system.Variables[1]));
        return true;
    }

    /// <summary>Parses <c>name=value,name=value</c> (invariant culture); one message on the first bad item.</summary>
    internal static bool TryAssignments(string? text, string option, TextWriter stderr, out Dictionary<string, double> values)
    {
        values = new Dictionary<string, double>(StringComparer.Ordinal);
        if (string.IsNullOrWhiteSpace(text))
        {
            return true;
        }

        foreach (var part in text.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries))
        {
            var eq = part.IndexOf('=', StringComparison.Ordinal);
            if (eq <= 0 || !double.TryParse(part.AsSpan(eq + 1), NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v))
            {
                stderr.WriteLine($"nffit: usage: {option}: '{part}' is not name=value; write e.g. a=0.8,k=0.1 (decimal point)");
                return false;
            }

            var name = part[..eq].Trim();
            if (!values.TryAdd(name, v))
            {
                stderr.WriteLine($"nffit: usage: {option}: '{name}' is given twice");
                return false;
            }
        }

        return true;
    }

    /// <summary>
    /// The value at which the map's <paramref name="name"/> is held: from <c>--fix name=v</c> (taken out of
    /// <paramref name="fixeds"/>) or from its own option; both given with different values is a usage error.
    /// </summary>
    private static bool TryMapValue(Dictionary<string, double> fixeds, string name, double? option, TextWriter stderr, out double? value)
    {
        value = option;
        if (!fixeds.Remove(name, out var v))
        {
            return true;
        }

        if (option is { } o && o != v)
        {
            stderr.WriteLine(string.Create(CultureInfo.InvariantCulture, $"nffit: usage: --fix {name}={v:R} and --{name} {o:R} disagree; give one of them"));
            return false;
        }

        value = v;
        return true;
    }

    internal static void Report(TextWriter stderr, IReadOnlyList<Diagnostic> diagnostics, string? expression)
    {
        foreach (var d in diagnostics)
        {
            stderr.WriteLine($"nffit: {d}");
            if (expression is not null && d.Column is { } col)
            {
                var lines = expression.Split('\n');
                stderr.WriteLine($"nffit:   {lines[Math.Clamp((d.Line ?? 1) - 1, 0, lines.Length - 1)].TrimEnd('\r')}");
                stderr.WriteLine($"nffit:   {new string(' ', Math.Max(col - 1, 0))}^");
            }
        }
    }
}
