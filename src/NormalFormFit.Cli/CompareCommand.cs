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
        var model = new Option<string>("--model") { Description = "the reduced model θ̇ = f(theta, mu; parameters), e.g. 'mu - a*sin(theta)' (see docs/model-expressions.md)", Required = true };
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
            manifest, model, start, fix, c0, c1, noPeriods, replicates, pilot, seed, json, outDir, quiet, verbose,
        };
        reading.AddTo(cmd);
        cmd.SetAction(pr =>
        {
            if (reading.Check(pr, stderr) is { } badColumn)
            {
                return badColumn;
            }

            var parsed = ModelExpression.Parse(pr.GetValue(model)!);
            if (parsed.Value is null)
            {
                Report(stderr, parsed.Diagnostics, pr.GetValue(model)!);
                return ExitCodes.BadInput;
            }

            var missing = ModelRequirements.Check(parsed.Value).Where(d => d.Severity == Severity.Error).ToList();
            if (missing.Count > 0)
            {
                Report(stderr, missing, pr.GetValue(model)!);
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
            return Execute(pr.GetValue(manifest)!, parsed.Value, options, pr.GetValue(json), pr.GetValue(quiet), stdout, stderr, pr.GetValue(outDir), analyzeOptions);
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
                stderr.WriteLine($"nffit:   {expression}");
                stderr.WriteLine($"nffit:   {new string(' ', Math.Max(col - 1, 0))}^");
            }
        }
    }
}
