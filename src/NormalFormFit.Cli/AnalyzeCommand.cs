using System.CommandLine;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Reporting;

namespace NormalFormFit.Cli;

internal static class AnalyzeCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        var manifest = new Argument<string>("manifest") { Description = "CSV with header 'file,param' naming one run file per parameter value" };
        var outDir = new Option<string?>("--out") { Description = "write the full report to folder DIR: report.html, figures (PNG and SVG), runs.csv, field.csv, report.json" };
        var json = new Option<string?>("--json") { Description = "also write the JSON report to FILE ('-' for standard output, which then carries only the JSON)" };
        var reading = new ReadingOptions();
        var threads = new Option<int>("--threads") { Description = "runs analysed at once (default: one per core); results do not depend on it", DefaultValueFactory = _ => Environment.ProcessorCount };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var verbose = new Option<bool>("--verbose") { Description = "print details of internal errors" };
        var runsOnly = new Option<string?>("--runs-only") { Description = "analyse the runs only and write one JSON line per run to FILE, for 'nffit combine' (docs/scale.md)" };
        var cmd = new Command("analyze", "Find the onset from a set of runs: bottleneck normal form, periods, scaling")
        {
            manifest, outDir, json,
        };
        reading.AddTo(cmd);
        foreach (var option in new Option[] { threads, quiet, verbose, runsOnly })
        {
            cmd.Options.Add(option);
        }

        cmd.SetAction(pr =>
        {
            if (reading.Check(pr, stderr) is { } badColumn)
            {
                return badColumn;
            }

            var options = reading.Bind(pr, AnalyzeOptions.Default with { Parallelism = Math.Max(1, pr.GetValue(threads)) });
            if (options.Run.SignalEvents.Validate() is { } badEvents)
            {
                stderr.WriteLine($"nffit: usage: {badEvents}");
                return ExitCodes.BadInput;
            }
            if (pr.GetValue(runsOnly) is not null && (pr.GetValue(json) is not null || pr.GetValue(outDir) is not null))
            {
                stderr.WriteLine("nffit: usage: --runs-only writes run results only; make the reports with 'nffit combine FILE --json REPORT --out DIR'");
                return ExitCodes.BadInput;
            }

            var progress = ProgressLine.For(stderr, pr.GetValue(quiet) || pr.GetValue(json) == "-");
            return pr.GetValue(runsOnly) is { } linesPath
                ? RunsOnlyCommand.Execute(pr.GetValue(manifest)!, linesPath, pr.GetValue(quiet), options, stdout, stderr, progress)
                : Execute(pr.GetValue(manifest)!, pr.GetValue(json), pr.GetValue(quiet), options, stdout, stderr, pr.GetValue(outDir), progress);
        });
        return cmd;
    }

    internal static int Execute(string manifestPath, string? jsonPath, bool quiet, AnalyzeOptions options, TextWriter stdout, TextWriter stderr, string? outDir = null, ProgressLine? progress = null)
    {
        var outputs = PlannedOutput.OfReport(outDir, jsonPath);

        if (CommandGuard.ManifestCommand(manifestPath, outputs, stderr) is { } refused)
        {
            return refused;
        }

        progress ??= ProgressLine.For(stderr, quiet || jsonPath == "-");
        var result = ManifestAnalyzer.Analyze(manifestPath, options, progress.Counter("runs analysed"));
        progress.Clear();
        return Report(result, jsonPath, quiet, stdout, stderr, outDir, Path.GetFileName(manifestPath), progress);
    }

    /// <summary>Prints an analysis (text, JSON, report folder) or its errors; returns the exit code. Shared with combine.</summary>
    internal static int Report(Loaded<AnalysisReport> result, string? jsonPath, bool quiet, TextWriter stdout, TextWriter stderr, string? outDir = null, string? sourceName = null, ProgressLine? progress = null)
    {
        progress ??= ProgressLine.For(stderr, quiet: true);
        if (result.Value is null)
        {
            var errors = result.Diagnostics.Where(d => d.Severity == Severity.Error).ToList();
            foreach (var d in result.Diagnostics)
            {
                stderr.WriteLine($"nffit: {d}");
            }

            return errors.Any(e => InsufficientData.Codes.Contains(e.Code) || RunSetSanity.Codes.Contains(e.Code)) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
        }

        var report = result.Value;
        if (outDir is not null && !CommandOutput.TryWriteFolder(outDir, stderr, () => ReportFolder.Write(outDir, report, sourceName ?? "manifest", progress.Report), progress.Clear))
        {
            return ExitCodes.BadInput;
        }

        if (jsonPath is not null && !CommandOutput.TryWriteJson(jsonPath, s => JsonReport.Write(report, s, NffitApp.Version), stdout, stderr))
        {
            return ExitCodes.BadInput;
        }

        if (jsonPath != "-" && !quiet)
        {
            stdout.Write(TextReport.Format(report));
        }

        return ExitCodes.Ok;
    }
}
