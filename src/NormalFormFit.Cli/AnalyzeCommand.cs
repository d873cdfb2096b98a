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
        var timeCol = new Option<string?>("--time-column") { Description = "time column: header name or 1-based position (default: recognised from the header: t, time, time_s, t [ms]…)" };
        var phaseCol = new Option<string?>("--phase-column") { Description = "phase column: header name or 1-based position (default: recognised: theta, phase, phi, angle, angle_deg…)" };
        var unit = new Option<string?>("--phase-unit") { Description = "unit of the phase column (default: from its name, e.g. theta_deg, else radians)" };
        unit.AcceptOnlyFromAmong("radians", "degrees", "turns");
        var timeUnit = new Option<string?>("--time-unit") { Description = "unit of the time columns, e.g. s or ms (default: from their names, e.g. time_s)" };
        var paramUnit = new Option<string?>("--param-unit") { Description = "unit of the control parameter (default: from the manifest, e.g. voltage_V)" };
        var paramCol = new Option<string?>("--param-column") { Description = "manifest column of the parameter values: header name or 1-based position (default: 'param', else the only column besides file, label and units)" };
        var qualityCol = new Option<string?>("--quality-column") { Description = "per-sample quality column (default: recognised: confidence, likelihood, quality, score); 'none' to use every row" };
        var minQuality = new Option<double>("--min-quality") { Description = "rows whose quality is below this are missing samples", DefaultValueFactory = _ => RunReader.DefaultMinQuality };
        var decimalComma = new Option<bool>("--decimal-comma") { Description = "numbers in run files use a decimal comma (fields then separated by ';', tab or blanks)" };
        var kind = new Option<string>("--kind") { Description = "what the run files record: auto (from the columns), phase (t,theta), positions (t,x,y), events (one column of event times) or signal (time and one signal such as a voltage, in which events are detected)", DefaultValueFactory = _ => "auto" };
        kind.AcceptOnlyFromAmong("auto", "phase", "positions", "events", "signal");
        var xCol = new Option<string?>("--x-column") { Description = "positions: x (or first state variable) column, header name or 1-based position (default: recognised: x, x_px, nose_x…)" };
        var yCol = new Option<string?>("--y-column") { Description = "positions: y (or second state variable) column, header name or 1-based position (default: recognised)" };
        var eventCol = new Option<string?>("--event-column") { Description = "events: column of event times, header name or 1-based position (default: the only column, else the time column)" };
        var signalCol = new Option<string?>("--signal-column") { Description = "signal: the column of the signal (e.g. Vm_mV), header name or 1-based position (default: the one column besides time that is not a phase, position pair, quality or frame number)" };
        var threshold = new Option<double?>("--event-threshold") { Description = "signal: events are upward crossings of this level, in the signal's unit (default: halfway from the signal's median to the median height of its excursions)" };
        var hysteresis = new Option<double?>("--event-hysteresis") { Description = "signal: after an event the signal must fall this far below the threshold before the next one counts (default: a quarter of the span from median to tip)" };
        var refractory = new Option<double?>("--refractory-time") { Description = "signal: a crossing sooner than this after an event (run time unit) is not a new event (default: the median time an event stays above threshold)" };
        var delimiter = new Option<string>("--delimiter") { Description = "field separator of run files: auto, comma, semicolon, tab or whitespace", DefaultValueFactory = _ => "auto" };
        delimiter.AcceptOnlyFromAmong("auto", "comma", "semicolon", "tab", "whitespace");
        var yDown = new Option<bool>("--y-down") { Description = "positions: the y axis points down (image rows); the turning sense is reported as seen on screen" };
        var unwrapped = new Option<bool>("--phase-unwrapped") { Description = "the phase column is already unwrapped: use steps between samples as recorded" };
        var threads = new Option<int>("--threads") { Description = "runs analysed at once (default: one per core); results do not depend on it", DefaultValueFactory = _ => Environment.ProcessorCount };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var verbose = new Option<bool>("--verbose") { Description = "print details of internal errors" };
        var runsOnly = new Option<string?>("--runs-only") { Description = "analyse the runs only and write one JSON line per run to FILE, for 'nffit combine' (docs/scale.md)" };
        var cmd = new Command("analyze", "Find the onset from a set of runs: bottleneck normal form, periods, scaling")
        {
            manifest, outDir, json, timeCol, phaseCol, unit, timeUnit, paramUnit, paramCol, qualityCol, minQuality, decimalComma, kind, xCol, yCol, eventCol, signalCol, threshold, hysteresis, refractory, delimiter, yDown, unwrapped, threads, quiet, verbose, runsOnly,
        };
        cmd.SetAction(pr =>
        {
            var options = new AnalyzeOptions
            {
                Read = new RunReadOptions
                {
                    TimeColumn = pr.GetValue(timeCol),
                    PhaseColumn = pr.GetValue(phaseCol),
                    PhaseUnit = pr.GetValue(unit) switch
                    {
                        "degrees" => PhaseUnit.Degrees,
                        "turns" => PhaseUnit.Turns,
                        "radians" => PhaseUnit.Radians,
                        _ => null,
                    },
                    TimeUnit = pr.GetValue(timeUnit),
                    QualityColumn = pr.GetValue(qualityCol),
                    MinQuality = pr.GetValue(minQuality),
                    DecimalComma = pr.GetValue(decimalComma),
                    Kind = pr.GetValue(kind) switch
                    {
                        "phase" => RecordingKindOption.Phase,
                        "positions" => RecordingKindOption.Positions,
                        "events" => RecordingKindOption.Events,
                        "signal" => RecordingKindOption.Signal,
                        _ => RecordingKindOption.Auto,
                    },
                    XColumn = pr.GetValue(xCol),
                    YColumn = pr.GetValue(yCol),
                    EventColumn = pr.GetValue(eventCol),
                    SignalColumn = pr.GetValue(signalCol),
                    Delimiter = pr.GetValue(delimiter) switch
                    {
                        "comma" => Delimiter.Comma,
                        "semicolon" => Delimiter.Semicolon,
                        "tab" => Delimiter.Tab,
                        "whitespace" => Delimiter.Whitespace,
                        _ => Delimiter.Auto,
                    },
                    YDown = pr.GetValue(yDown),
                    PhaseUnwrapped = pr.GetValue(unwrapped),
                },
                Run = RunOptions.Default with
                {
                    SignalEvents = new SignalEventOptions
                    {
                        Threshold = pr.GetValue(threshold),
                        Hysteresis = pr.GetValue(hysteresis),
                        RefractoryTime = pr.GetValue(refractory),
                    },
                },
                Parallelism = Math.Max(1, pr.GetValue(threads)),
                ParamColumn = pr.GetValue(paramCol),
                ParamUnit = pr.GetValue(paramUnit),
            };
            if (CommandGuard.ColumnOptions(stderr, ("--time-column", pr.GetValue(timeCol)), ("--phase-column", pr.GetValue(phaseCol)), ("--x-column", pr.GetValue(xCol)), ("--y-column", pr.GetValue(yCol)), ("--event-column", pr.GetValue(eventCol)), ("--signal-column", pr.GetValue(signalCol))) is { } badColumn)
            {
                return badColumn;
            }

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
