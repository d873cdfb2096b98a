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
        var json = new Option<string?>("--json") { Description = "also write the JSON report to FILE ('-' for standard output, which then carries only the JSON)" };
        var timeCol = new Option<string>("--time-column") { Description = "time column: header name or 1-based position", DefaultValueFactory = _ => "t" };
        var phaseCol = new Option<string>("--phase-column") { Description = "phase column: header name or 1-based position", DefaultValueFactory = _ => "theta" };
        var unit = new Option<string>("--phase-unit") { Description = "unit of the phase column", DefaultValueFactory = _ => "radians" };
        unit.AcceptOnlyFromAmong("radians", "degrees", "turns");
        var decimalComma = new Option<bool>("--decimal-comma") { Description = "numbers in run files use a decimal comma (fields then separated by ';', tab or blanks)" };
        var threads = new Option<int>("--threads") { Description = "runs analysed at once (default: one per core); results do not depend on it", DefaultValueFactory = _ => Environment.ProcessorCount };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var verbose = new Option<bool>("--verbose") { Description = "print details of internal errors" };
        var runsOnly = new Option<string?>("--runs-only") { Description = "analyse the runs only and write one JSON line per run to FILE, for 'nffit combine' (docs/scale.md)" };
        var cmd = new Command("analyze", "Find the onset from a set of runs: bottleneck normal form, periods, scaling")
        {
            manifest, json, timeCol, phaseCol, unit, decimalComma, threads, quiet, verbose, runsOnly,
        };
        cmd.SetAction(pr =>
        {
            var options = new AnalyzeOptions
            {
                Read = new RunReadOptions
                {
                    TimeColumn = pr.GetValue(timeCol)!,
                    PhaseColumn = pr.GetValue(phaseCol)!,
                    PhaseUnit = pr.GetValue(unit) switch
                    {
                        "degrees" => PhaseUnit.Degrees,
                        "turns" => PhaseUnit.Turns,
                        _ => PhaseUnit.Radians,
                    },
                    DecimalComma = pr.GetValue(decimalComma),
                },
                Parallelism = Math.Max(1, pr.GetValue(threads)),
            };
            if (pr.GetValue(runsOnly) is not null && pr.GetValue(json) is not null)
            {
                stderr.WriteLine("nffit: usage: --runs-only writes run results only; make the JSON report with 'nffit combine FILE --json REPORT'");
                return ExitCodes.BadInput;
            }

            var progress = RunProgress.ForTerminal(stderr, pr.GetValue(quiet));
            return pr.GetValue(runsOnly) is { } linesPath
                ? RunsOnlyCommand.Execute(pr.GetValue(manifest)!, linesPath, pr.GetValue(quiet), options, stdout, stderr, progress)
                : Execute(pr.GetValue(manifest)!, pr.GetValue(json), pr.GetValue(quiet), options, stdout, stderr, progress);
        });
        return cmd;
    }

    internal static int Execute(string manifestPath, string? jsonPath, bool quiet, AnalyzeOptions options, TextWriter stdout, TextWriter stderr, IProgress<int>? progress = null)
    {
        var result = ManifestAnalyzer.Analyze(manifestPath, options, progress);
        RunProgress.Finish(progress, stderr);
        return Report(result, jsonPath, quiet, stdout, stderr);
    }

    /// <summary>Prints an analysis (text and/or JSON) or its errors; returns the exit code. Shared with combine.</summary>
    internal static int Report(Loaded<AnalysisReport> result, string? jsonPath, bool quiet, TextWriter stdout, TextWriter stderr)
    {
        if (result.Value is null)
        {
            var errors = result.Diagnostics.Where(d => d.Severity == Severity.Error).ToList();
            foreach (var d in result.Diagnostics)
            {
                stderr.WriteLine($"nffit: {d}");
            }

            return errors.Any(e => e.Code == InsufficientData.TooFewRuns) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
        }

        var report = result.Value;
        if (jsonPath == "-")
        {
            using var stdoutStream = new MemoryStream();
            JsonReport.Write(report, stdoutStream, NffitApp.Version);
            stdout.WriteLine(System.Text.Encoding.UTF8.GetString(stdoutStream.ToArray()));
        }
        else
        {
            if (jsonPath is not null)
            {
                try
                {
                    AtomicFile.Write(jsonPath, s => JsonReport.Write(report, s, NffitApp.Version));
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    stderr.WriteLine($"nffit: {jsonPath}: error: cannot write the JSON report ({e.Message}); check that the folder exists and is writable");
                    return ExitCodes.BadInput;
                }
            }

            if (!quiet)
            {
                stdout.Write(TextReport.Format(report));
            }
        }

        return ExitCodes.Ok;
    }
}
