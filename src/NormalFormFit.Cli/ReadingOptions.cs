using System.CommandLine;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;

namespace NormalFormFit.Cli;

/// <summary>
/// The options that say how run files and the manifest are read, shared by every command that reads runs
/// (<c>analyze</c>, <c>compare</c>): one definition, so that both read the same files the same way.
/// </summary>
internal sealed class ReadingOptions
{
    private readonly Option<string?> timeCol = new("--time-column") { Description = "time column: header name or 1-based position (default: recognised from the header: t, time, time_s, t [ms]…)" };
    private readonly Option<string?> phaseCol = new("--phase-column") { Description = "phase column: header name or 1-based position (default: recognised: theta, phase, phi, angle, angle_deg…)" };
    private readonly Option<string?> phaseUnit = new("--phase-unit") { Description = "unit of the phase column (default: from its name, e.g. theta_deg, else radians)" };
    private readonly Option<string?> timeUnit = new("--time-unit") { Description = "unit of the time columns, e.g. s or ms (default: from their names, e.g. time_s)" };
    private readonly Option<string?> paramUnit = new("--param-unit") { Description = "unit of the control parameter (default: from the manifest, e.g. voltage_V)" };
    private readonly Option<string?> paramCol = new("--param-column") { Description = "manifest column of the parameter values: header name or 1-based position (default: 'param', else the only column besides file, label and units)" };
    private readonly Option<string?> qualityCol = new("--quality-column") { Description = "per-sample quality column (default: recognised: confidence, likelihood, quality, score); 'none' to use every row" };
    private readonly Option<double> minQuality = new("--min-quality") { Description = "rows whose quality is below this are missing samples", DefaultValueFactory = _ => RunReader.DefaultMinQuality };
    private readonly Option<bool> decimalComma = new("--decimal-comma") { Description = "numbers in run files use a decimal comma (fields then separated by ';', tab or blanks)" };
    private readonly Option<string> kind = new("--kind") { Description = "what the run files record: auto (from the columns), phase (t,theta), positions (t,x,y), events (one column of event times) or signal (time and one signal such as a voltage, in which events are detected)", DefaultValueFactory = _ => "auto" };
    private readonly Option<string?> xCol = new("--x-column") { Description = "positions: x (or first state variable) column, header name or 1-based position (default: recognised: x, x_px, nose_x…)" };
    private readonly Option<string?> yCol = new("--y-column") { Description = "positions: y (or second state variable) column, header name or 1-based position (default: recognised)" };
    private readonly Option<string?> eventCol = new("--event-column") { Description = "events: column of event times, header name or 1-based position (default: the only column, else the time column)" };
    private readonly Option<string?> signalCol = new("--signal-column") { Description = "signal: the column of the signal (e.g. Vm_mV), header name or 1-based position (default: the one column besides time that is not a phase, position pair, quality or frame number)" };
    private readonly Option<double?> threshold = new("--event-threshold") { Description = "signal: events are upward crossings of this level, in the signal's unit (default: halfway from the signal's median to the median height of its excursions)" };
    private readonly Option<double?> hysteresis = new("--event-hysteresis") { Description = "signal: after an event the signal must fall this far below the threshold before the next one counts (default: a quarter of the span from median to tip)" };
    private readonly Option<double?> refractory = new("--refractory-time") { Description = "signal: a crossing sooner than this after an event (run time unit) is not a new event (default: the median time an event stays above threshold)" };
    private readonly Option<string> delimiter = new("--delimiter") { Description = "field separator of run files: auto, comma, semicolon, tab or whitespace", DefaultValueFactory = _ => "auto" };
    private readonly Option<bool> yDown = new("--y-down") { Description = "positions: the y axis points down (image rows); the turning sense is reported as seen on screen" };
    private readonly Option<bool> unwrapped = new("--phase-unwrapped") { Description = "the phase column is already unwrapped: use steps between samples as recorded" };

    public ReadingOptions()
    {
        phaseUnit.AcceptOnlyFromAmong("radians", "degrees", "turns");
        kind.AcceptOnlyFromAmong("auto", "phase", "positions", "events", "signal");
        delimiter.AcceptOnlyFromAmong("auto", "comma", "semicolon", "tab", "whitespace");
    }

    /// <summary>Adds every reading option to <paramref name="command"/>.</summary>
    public void AddTo(Command command)
    {
        foreach (var option in All)
        {
            command.Options.Add(option);
        }
    }

    /// <summary>
    /// Every reading option by its name without the leading dashes (e.g. <c>time-column</c>), and whether it is a
    /// switch that takes no value: the service (docs/service.md) takes them as form fields of the same names.
    /// </summary>
    public IReadOnlyDictionary<string, bool> Names() =>
        All.ToDictionary(o => o.Name.TrimStart('-'), o => o is Option<bool>, StringComparer.Ordinal);

    private readonly Option<bool> protophase = new("--signal-protophase") { Description = "signal: also reconstruct a protophase from the signal (delay-embedded orbit, arc length along the mean orbit) so that the bottleneck route can use the run (default: periods from the events only)" };

    private Option[] All => [timeCol, phaseCol, phaseUnit, timeUnit, paramUnit, paramCol, qualityCol, minQuality, decimalComma, kind, xCol, yCol, eventCol, signalCol, threshold, hysteresis, refractory, protophase, delimiter, yDown, unwrapped];

    /// <summary>A usage error (exit code) when a column option is empty or not a position from 1; else null.</summary>
    public int? Check(ParseResult pr, TextWriter stderr) =>
        CommandGuard.ColumnOptions(stderr, ("--time-column", pr.GetValue(timeCol)), ("--phase-column", pr.GetValue(phaseCol)), ("--x-column", pr.GetValue(xCol)), ("--y-column", pr.GetValue(yCol)), ("--event-column", pr.GetValue(eventCol)), ("--signal-column", pr.GetValue(signalCol)), ("--param-column", pr.GetValue(paramCol)));

    /// <summary>The analysis options these reading options give, on top of <paramref name="baseline"/>.</summary>
    public AnalyzeOptions Bind(ParseResult pr, AnalyzeOptions baseline) => baseline with
    {
        Read = new RunReadOptions
        {
            TimeColumn = pr.GetValue(timeCol),
            PhaseColumn = pr.GetValue(phaseCol),
            PhaseUnit = pr.GetValue(phaseUnit) switch
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
        Run = baseline.Run with
        {
            SignalEvents = new SignalEventOptions
            {
                Threshold = pr.GetValue(threshold),
                Hysteresis = pr.GetValue(hysteresis),
                RefractoryTime = pr.GetValue(refractory),
                Protophase = pr.GetValue(protophase),
            },
        },
        ParamColumn = pr.GetValue(paramCol),
        ParamUnit = pr.GetValue(paramUnit),
    };
}
