using System.Text.Json.Serialization;
using NormalFormFit.Analysis;
using NormalFormFit.Bottleneck;
using NormalFormFit.Field;
using NormalFormFit.Ingest;

namespace NormalFormFit.Reporting.Transfer;

// One run line of layout nffit-run/2 (RunLines), key for key in the order written: everything OnsetAnalysis.Combine
// needs from a run. The keys of smoothing, relaxation, noise and diagnostics are the report's; estimates are flat
// (x, x_se) as in the report. Objects a run does not have are left out.

/// <summary>One run, as one line of a run-lines file.</summary>
internal sealed record RunLineDto
{
    public required string Schema { get; init; }

    public required string File { get; init; }

    public required double Param { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? ParamUnits { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? ParamName { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? TimeUnit { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? Label { get; init; }

    public required int Samples { get; init; }

    public required double Duration { get; init; }

    public required double Turns { get; init; }

    public required int Direction { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public SmoothingDto? Smoothing { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public FieldLineDto? Field { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public BottleneckLineDto? Bottleneck { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public PeriodLineDto? Period { get; init; }

    public required string InputKind { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public OrbitLineDto? Orbit { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public RelaxationDto? Relaxation { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public NoiseDto? Noise { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public DroppedRowsDto? RowsDropped { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public SignalEventsDto? Events { get; init; }

    public required IReadOnlyList<string> Flags { get; init; }

    public required IReadOnlyList<DiagnosticDto> Diagnostics { get; init; }

    public static RunLineDto From(RunResult r, string schema, RunSet set) => new()
    {
        Schema = schema,
        File = r.File,
        Param = r.Param,
        ParamUnits = set.ParamUnits,
        ParamName = set.ParamName,
        TimeUnit = set.TimeUnit,
        Label = r.Label,
        Samples = r.Samples,
        Duration = r.Duration,
        Turns = r.Turns,
        Direction = r.Direction,
        Smoothing = SmoothingDto.From(r.Smoothing),
        Field = r.Field is { } f
            ? new FieldLineDto
            {
                Centres = f.Centres,
                Velocity = f.Velocity,
                Se = f.StandardError,
                Revolutions = f.Revolutions,
                Period = f.Period.Value,
                PeriodSe = f.Period.StandardError,
            }
            : null,
        Bottleneck = r.Bottleneck is { } b
            ? new BottleneckLineDto
            {
                Phase = b.Phase.Value,
                PhaseSe = b.Phase.StandardError,
                A = b.A.Value,
                ASe = b.A.StandardError,
                B = b.B.Value,
                BSe = b.B.StandardError,
                HalfWindow = b.HalfWidth,
                Samples = b.Samples,
                ResidualRms = b.ResidualRms,
                QuarticBias = b.QuarticBias,
                Residuals = [.. b.Residuals.Select(x => new ResidualLineDto { Offset = x.Offset, Residual = x.Residual, Se = x.StandardError, Samples = x.Samples })],
            }
            : null,
        Period = r.Period is { } p
            ? new PeriodLineDto
            {
                Measured = p.Measured.Value,
                MeasuredSe = p.Measured.StandardError,
                FromBottleneck = p.FromBottleneck.Value,
                FromBottleneckSe = p.FromBottleneck.StandardError,
                FromField = p.FromField.Value,
                FromFieldSe = p.FromField.StandardError,
                Revolutions = p.Revolutions,
            }
            : null,
        InputKind = WireNames.Of(r.InputKind),
        Orbit = r.Orbit is { } o
            ? new OrbitLineDto
            {
                CentreX = o.Ellipse.CentreX,
                CentreY = o.Ellipse.CentreY,
                SemiMajor = o.Ellipse.SemiMajor,
                SemiMinor = o.Ellipse.SemiMinor,
                Tilt = o.Ellipse.Tilt,
                Conic = o.Ellipse.Conic,
                RmsDeviation = o.RmsDeviation,
                MinRadius = o.MinRadius,
                IsEllipse = o.IsEllipse,
                Sense = o.Sense,
            }
            : null,
        Relaxation = RelaxationDto.From(r.Relaxation),
        Noise = NoiseDto.From(r.Noise),
        RowsDropped = r.Dropped.Total > 0 ? DroppedRowsDto.From(r.Dropped) : null,
        Events = SignalEventsDto.From(r.Events),
        Flags = [.. r.Flags.Select(WireNames.Of)],
        Diagnostics = [.. r.Diagnostics.Select(DiagnosticDto.From)],
    };

    public RunResult ToRunResult() => new(
        File,
        Param,
        Label,
        Samples,
        Duration,
        Turns,
        Direction,
        Smoothing?.ToSummary(),
        Field is { } f ? new PhaseField(f.Centres, f.Velocity, f.Se, f.Revolutions, new Estimate(f.Period, f.PeriodSe)) : null,
        Bottleneck is { } b
            ? new BottleneckFit(new Estimate(b.Phase, b.PhaseSe), new Estimate(b.A, b.ASe), new Estimate(b.B, b.BSe), b.HalfWindow, b.Samples, b.ResidualRms, b.QuarticBias)
            {
                Residuals = [.. b.Residuals.Select(x => new ResidualBin(x.Offset, x.Residual, x.Se, x.Samples))],
            }
            : null,
        Period is { } p
            ? new PeriodSummary(new Estimate(p.Measured, p.MeasuredSe), new Estimate(p.FromBottleneck, p.FromBottleneckSe), new Estimate(p.FromField, p.FromFieldSe), p.Revolutions)
            : null,
        [.. Flags.Select(WireNames.ParseFlag)],
        [.. Diagnostics.Select(d => d.ToDiagnostic())])
    {
        InputKind = WireNames.ParseRecordingKind(InputKind),
        Orbit = Orbit is { } o
            ? new OrbitSummary(new Ellipse(o.CentreX, o.CentreY, o.SemiMajor, o.SemiMinor, o.Tilt, o.Conic), o.RmsDeviation, o.MinRadius, o.IsEllipse, o.Sense)
            : null,
        Relaxation = Relaxation?.ToFit(),
        Noise = Noise?.ToEstimate(),
        Dropped = RowsDropped?.ToRows() ?? DroppedRows.None,
        Events = Events?.ToSummary(),
    };
}

/// <summary><c>field</c>: θ̇(θ) in bins with pointwise standard errors, and ∮dθ/θ̇.</summary>
internal sealed record FieldLineDto
{
    public required double[] Centres { get; init; }

    public required double[] Velocity { get; init; }

    public required double[] Se { get; init; }

    public required int Revolutions { get; init; }

    public required double Period { get; init; }

    public required double PeriodSe { get; init; }
}

/// <summary><c>bottleneck</c>: the report's keys and what the combination and the figures need beyond them.</summary>
internal sealed record BottleneckLineDto
{
    public required double Phase { get; init; }

    public required double PhaseSe { get; init; }

    public required double A { get; init; }

    public required double ASe { get; init; }

    public required double B { get; init; }

    public required double BSe { get; init; }

    public required double HalfWindow { get; init; }

    public required int Samples { get; init; }

    public required double ResidualRms { get; init; }

    public required double QuarticBias { get; init; }

    public required IReadOnlyList<ResidualLineDto> Residuals { get; init; }
}

/// <summary><c>bottleneck.residuals[]</c>: binned residuals across the window.</summary>
internal sealed record ResidualLineDto
{
    public required double Offset { get; init; }

    public required double Residual { get; init; }

    public required double Se { get; init; }

    public required int Samples { get; init; }
}

/// <summary><c>period</c>: measured and predicted periods.</summary>
internal sealed record PeriodLineDto
{
    public required double Measured { get; init; }

    public required double MeasuredSe { get; init; }

    public required double FromBottleneck { get; init; }

    public required double FromBottleneckSe { get; init; }

    public required double FromField { get; init; }

    public required double FromFieldSe { get; init; }

    public required int Revolutions { get; init; }
}

/// <summary><c>orbit</c>: the fitted ellipse exactly (tilt in radians, conic coefficients), unlike the report's summary.</summary>
internal sealed record OrbitLineDto
{
    public required double CentreX { get; init; }

    public required double CentreY { get; init; }

    public required double SemiMajor { get; init; }

    public required double SemiMinor { get; init; }

    public required double Tilt { get; init; }

    public required double[] Conic { get; init; }

    public required double RmsDeviation { get; init; }

    public required double MinRadius { get; init; }

    public required bool IsEllipse { get; init; }

    public required string Sense { get; init; }
}
