using System.Text.Json.Serialization;
using NormalFormFit.Analysis;
using NormalFormFit.Bottleneck;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Reporting.Transfer;

// The JSON report (JsonReport), key for key in the order written. Keys documented in README are a contract: new keys
// may be added, none renamed. Keys marked WhenWritingNull are left out when there is nothing to say; every other key is
// always present (null when not estimated).

/// <summary>The whole report document.</summary>
internal sealed record ReportDto
{
    public required string Schema { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? ToolVersion { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? ParamUnits { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? ParamName { get; init; }

    /// <summary>Always present; each unit null when unknown.</summary>
    public required UnitsDto Units { get; init; }

    public required OnsetSectionDto Onset { get; init; }

    public required ScalingDto Scaling { get; init; }

    public required IReadOnlyList<NextMeasurementDto> NextMeasurements { get; init; }

    public required IReadOnlyList<RunDto> Runs { get; init; }

    public required IReadOnlyList<DiagnosticDto> Diagnostics { get; init; }

    public static ReportDto From(AnalysisReport report, string schema, string? toolVersion) => new()
    {
        Schema = schema,
        ToolVersion = toolVersion,
        ParamUnits = report.ParamUnits,
        ParamName = report.ParamName,
        Units = new UnitsDto { Param = report.ParamUnits, Time = report.TimeUnit },
        Onset = new OnsetSectionDto
        {
            Recommended = RecommendedDto.From(report.Recommended),
            FromBottleneck = RouteDto.From(report.FromBottleneck, report.Verdict),
            FromPeriod = RouteDto.From(report.FromPeriod, report.Verdict),
            Agreement = new AgreementDto { Z = report.Agreement.Z, Consistent = report.Agreement.Consistent, Reason = report.Agreement.Reason },
        },
        Scaling = ScalingDto.From(report.Scaling, report.Verdict),
        NextMeasurements = [.. report.NextMeasurements.Select(NextMeasurementDto.From)],
        Runs = [.. report.Runs.Select(r => RunDto.From(r, report.FlagsOf(r)))],
        Diagnostics = [.. report.AllDiagnostics.Select(DiagnosticDto.From)],
    };
}

/// <summary><c>units</c>: of the control parameter and of time (periods are in it, rates per it); null when unknown.</summary>
internal sealed record UnitsDto
{
    public string? Param { get; init; }

    public string? Time { get; init; }
}

/// <summary><c>runs[].rows_dropped</c>: rows of the run file not used as samples, by reason.</summary>
internal sealed record DroppedRowsDto
{
    public int Blank { get; init; }

    public int LowQuality { get; init; }

    public int OffOrbit { get; init; }

    public int PhaseJumps { get; init; }

    public int Total { get; init; }

    public static DroppedRowsDto From(NormalFormFit.Ingest.DroppedRows d) => new()
    {
        Blank = d.Blank,
        LowQuality = d.LowQuality,
        OffOrbit = d.OffOrbit,
        PhaseJumps = d.PhaseJumps,
        Total = d.Total,
    };

    public NormalFormFit.Ingest.DroppedRows ToRows() => new(Blank, LowQuality, OffOrbit, PhaseJumps);
}

/// <summary><c>onset</c>: the recommended onset, then the two routes and whether they agree.</summary>
internal sealed record OnsetSectionDto
{
    public required RecommendedDto Recommended { get; init; }

    public required RouteDto FromBottleneck { get; init; }

    public required RouteDto FromPeriod { get; init; }

    public required AgreementDto Agreement { get; init; }
}

/// <summary><c>onset.recommended</c>: the one onset to act on; value, se and bounds null when none is recommended.</summary>
internal sealed record RecommendedDto
{
    public double Value { get; init; }

    public double Se { get; init; }

    public double Ci95Low { get; init; }

    public double Ci95High { get; init; }

    /// <summary>"combined", "bottleneck", "period" or "none".</summary>
    public required string Basis { get; init; }

    public required string Reason { get; init; }

    public static RecommendedDto From(RecommendedOnset r) => new()
    {
        Value = r.Value,
        Se = r.StandardError,
        Ci95Low = r.Ci95.Low,
        Ci95High = r.Ci95.High,
        Basis = WireNames.Of(r.Basis),
        Reason = r.Reason,
    };
}

/// <summary><c>onset.from_bottleneck</c>, <c>onset.from_period</c>.</summary>
internal sealed record RouteDto
{
    public double Value { get; init; }

    public double Se { get; init; }

    public double Ci95Low { get; init; }

    public double Ci95High { get; init; }

    public int Runs { get; init; }

    public double TrendDegree { get; init; }

    /// <summary>"polynomial" (trend_degree tells which) or "square-root-with-offset" (trend_degree null); absent without a curve.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? Law { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? LawDescription { get; init; }

    public required string Status { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? StatusReason { get; init; }

    public int RunsBelowOnset { get; init; }

    public static RouteDto From(OnsetEstimate e, OnsetVerdict verdict) => new()
    {
        Value = e.Value,
        Se = e.StandardError,
        Ci95Low = e.Ci95.Low,
        Ci95High = e.Ci95.High,
        Runs = e.Runs,
        TrendDegree = e.Trend?.Degree ?? double.NaN,
        Law = e.Curve is { } curve ? WireNames.Of(curve.Law) : null,
        LawDescription = e.Curve?.Description,
        Status = WireNames.Of(verdict.RouteStatus),
        StatusReason = verdict.RouteStatusReason,
        RunsBelowOnset = e.RunsBelowOnset,
    };
}

/// <summary><c>onset.agreement</c>.</summary>
internal sealed record AgreementDto
{
    public double Z { get; init; }

    public bool Consistent { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? Reason { get; init; }
}

/// <summary><c>scaling</c>: the period scaling law and the kind of onset.</summary>
internal sealed record ScalingDto
{
    public double Exponent { get; init; }

    public double ExponentSe { get; init; }

    public double Ci95Low { get; init; }

    public double Ci95High { get; init; }

    public required string Verdict { get; init; }

    public required string Evidence { get; init; }

    public double Onset { get; init; }

    public int Runs { get; init; }

    public required string Form { get; init; }

    public double Offset { get; init; }

    public double OffsetSe { get; init; }

    /// <summary>Always present (null without period laws).</summary>
    public WeightsDto? Weights { get; init; }

    /// <summary>Present exactly when <see cref="Weights"/> is not null.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public IReadOnlyList<LawDto>? Laws { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public MinimumSpeedDto? MinimumSpeed { get; init; }

    public static ScalingDto From(ScalingResult? s, OnsetVerdict verdict) => new()
    {
        Exponent = s?.Exponent.Value ?? double.NaN,
        ExponentSe = s?.Exponent.StandardError ?? double.NaN,
        Ci95Low = s?.Ci95.Low ?? double.NaN,
        Ci95High = s?.Ci95.High ?? double.NaN,
        Verdict = WireNames.Of(verdict.Kind),
        Evidence = verdict.Evidence,
        Onset = s?.Onset.Value ?? double.NaN,
        Runs = s?.Runs ?? 0,
        Form = WireNames.Of(s?.Form ?? ScalingForm.PowerLaw),
        Offset = s?.Offset?.Value ?? double.NaN,
        OffsetSe = s?.Offset?.StandardError ?? double.NaN,
        Weights = verdict.Weights is { } w ? new WeightsDto { SaddleNode = w.SaddleNode, Homoclinic = w.Homoclinic, FinitePeriod = w.FinitePeriod } : null,
        Laws = verdict.Weights is { } lw
            ? [.. lw.Fits.Select(f => new LawDto { Law = WireNames.Of(f.Law), Onset = f.Onset, Aic = f.Aic, OnsetAtSearchLimit = f.AtBoundary })]
            : null,
        MinimumSpeed = verdict.MinimumSpeed is { } m
            ? new MinimumSpeedDto
            {
                ReachesZero = m.ReachesZero,
                ZeroAt = m.Onset,
                Ci95Low = m.Ci95.Low,
                Ci95High = m.Ci95.High,
                RunsWithBottleneck = m.RunsWithBottleneck,
                TurningRuns = m.TurningRuns,
            }
            : null,
    };
}

/// <summary><c>scaling.weights</c>: Akaike weights of the three period laws.</summary>
internal sealed record WeightsDto
{
    public double SaddleNode { get; init; }

    public double Homoclinic { get; init; }

    public double FinitePeriod { get; init; }
}

/// <summary><c>scaling.laws[]</c>.</summary>
internal sealed record LawDto
{
    public required string Law { get; init; }

    public double Onset { get; init; }

    public double Aic { get; init; }

    public bool OnsetAtSearchLimit { get; init; }
}

/// <summary><c>scaling.minimum_speed</c>.</summary>
internal sealed record MinimumSpeedDto
{
    public bool ReachesZero { get; init; }

    public double ZeroAt { get; init; }

    public double Ci95Low { get; init; }

    public double Ci95High { get; init; }

    public int RunsWithBottleneck { get; init; }

    public int TurningRuns { get; init; }
}

/// <summary><c>next_measurements[]</c>.</summary>
internal sealed record NextMeasurementDto
{
    public required string Route { get; init; }

    public double Param { get; init; }

    public int Runs { get; init; }

    public double ExpectedPeriod { get; init; }

    public double CurrentCi95Low { get; init; }

    public double CurrentCi95High { get; init; }

    public double ExpectedCi95Low { get; init; }

    public double ExpectedCi95High { get; init; }

    public static NextMeasurementDto From(NextMeasurement m) => new()
    {
        Route = WireNames.Of(m.Route),
        Param = m.Param,
        Runs = m.Runs,
        ExpectedPeriod = m.ExpectedPeriod,
        CurrentCi95Low = m.CurrentCi95.Low,
        CurrentCi95High = m.CurrentCi95.High,
        ExpectedCi95Low = m.ExpectedCi95.Low,
        ExpectedCi95High = m.ExpectedCi95.High,
    };
}

/// <summary><c>runs[]</c>: one run as reported (the run lines carry more, see <see cref="RunLineDto"/>).</summary>
internal sealed record RunDto
{
    public required string File { get; init; }

    public double Param { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? Label { get; init; }

    public int Samples { get; init; }

    public double Turns { get; init; }

    public int Direction { get; init; }

    /// <summary>Always present (null without a bottleneck).</summary>
    public BottleneckDto? Bottleneck { get; init; }

    public required PeriodDto Period { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public SmoothingDto? Smoothing { get; init; }

    /// <summary>Always present (null unless a resting run's settling was resolved).</summary>
    public RelaxationDto? Relaxation { get; init; }

    /// <summary>Always present (null when the run is too short).</summary>
    public NoiseDto? Noise { get; init; }

    public required string InputKind { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public OrbitDto? Orbit { get; init; }

    /// <summary>Single-signal recordings only: the event detector's levels and counts.</summary>
    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public SignalEventsDto? Events { get; init; }

    /// <summary>Always present (zeros when every row was used).</summary>
    public required DroppedRowsDto RowsDropped { get; init; }

    public required IReadOnlyList<string> Flags { get; init; }

    public static RunDto From(RunResult r, IReadOnlyList<RunFlag> flags) => new()
    {
        File = r.File,
        Param = r.Param,
        Label = r.Label,
        Samples = r.Samples,
        Turns = r.Turns,
        Direction = r.Direction,
        Bottleneck = r.Bottleneck is { } b
            ? new BottleneckDto
            {
                Phase = b.Phase.Value,
                PhaseSe = b.Phase.StandardError,
                A = b.A.Value,
                ASe = b.A.StandardError,
                B = b.B.Value,
                BSe = b.B.StandardError,
                HalfWindow = b.HalfWidth,
            }
            : null,
        Period = new PeriodDto
        {
            Measured = r.Period?.Measured.Value ?? double.NaN,
            MeasuredSe = r.Period?.Measured.StandardError ?? double.NaN,
            FromBottleneck = r.Period?.FromBottleneck.Value ?? double.NaN,
            FromField = r.Period?.FromField.Value ?? double.NaN,
            FromFieldSe = r.Period?.FromField.StandardError ?? double.NaN,
            Revolutions = r.Period?.Revolutions ?? 0,
        },
        Smoothing = SmoothingDto.From(r.Smoothing),
        Relaxation = RelaxationDto.From(r.Relaxation),
        Noise = NoiseDto.From(r.Noise),
        InputKind = WireNames.Of(r.InputKind),
        Orbit = r.Orbit is { } o
            ? new OrbitDto
            {
                CentreX = o.Ellipse.CentreX,
                CentreY = o.Ellipse.CentreY,
                SemiMajor = o.Ellipse.SemiMajor,
                SemiMinor = o.Ellipse.SemiMinor,
                TiltDeg = o.Ellipse.Tilt * 180 / Math.PI,
                RmsDeviation = o.RmsDeviation,
                IsEllipse = o.IsEllipse,
                Phase = o.IsProtophase ? "protophase" : "ellipse-angle",
                Sense = o.Sense,
            }
            : null,
        Events = SignalEventsDto.From(r.Events),
        RowsDropped = DroppedRowsDto.From(r.Dropped),
        Flags = [.. flags.Select(WireNames.Of)],
    };
}

/// <summary>
/// <c>runs[].events</c>: how events were found in a single signal (levels in the signal's unit, refractory time in the
/// run's time unit; threshold null when no excursion rose clear of the noise).
/// </summary>
internal sealed record SignalEventsDto
{
    public required string Column { get; init; }

    public double Threshold { get; init; }

    public required string ThresholdFrom { get; init; }

    public double Hysteresis { get; init; }

    public double RefractoryTime { get; init; }

    public int Count { get; init; }

    public double Baseline { get; init; }

    public double TipLevel { get; init; }

    public double NoiseSd { get; init; }

    public int GlitchesLeftOut { get; init; }

    public int WithinRefractoryLeftOut { get; init; }

    public static SignalEventsDto? From(NormalFormFit.Ingest.SignalEventSummary? s) => s is null ? null : new()
    {
        Column = s.Column,
        Threshold = s.Threshold,
        ThresholdFrom = s.ThresholdGiven ? "option" : "signal",
        Hysteresis = s.Hysteresis,
        RefractoryTime = s.RefractoryTime,
        Count = s.Count,
        Baseline = s.Baseline,
        TipLevel = s.TipLevel,
        NoiseSd = s.NoiseSd,
        GlitchesLeftOut = s.Glitches,
        WithinRefractoryLeftOut = s.WithinRefractory,
    };

    public NormalFormFit.Ingest.SignalEventSummary ToSummary() =>
        new(Column, Baseline, TipLevel, NoiseSd, Threshold, Hysteresis, RefractoryTime, Count, GlitchesLeftOut, WithinRefractoryLeftOut, ThresholdFrom == "option");
}

/// <summary><c>runs[].bottleneck</c>: the normal-form fit θ̇ ≈ a + b(θ − θ*)².</summary>
internal sealed record BottleneckDto
{
    public double Phase { get; init; }

    public double PhaseSe { get; init; }

    public double A { get; init; }

    public double ASe { get; init; }

    public double B { get; init; }

    public double BSe { get; init; }

    public double HalfWindow { get; init; }
}

/// <summary><c>runs[].period</c> (always present; null numbers for a run that does not turn).</summary>
internal sealed record PeriodDto
{
    public double Measured { get; init; }

    public double MeasuredSe { get; init; }

    public double FromBottleneck { get; init; }

    public double FromField { get; init; }

    public double FromFieldSe { get; init; }

    public int Revolutions { get; init; }
}

/// <summary><c>runs[].orbit</c>: the ellipse fitted to positions (tilt in degrees).</summary>
internal sealed record OrbitDto
{
    public double CentreX { get; init; }

    public double CentreY { get; init; }

    public double SemiMajor { get; init; }

    public double SemiMinor { get; init; }

    public double TiltDeg { get; init; }

    public double RmsDeviation { get; init; }

    public bool IsEllipse { get; init; }

    public required string Phase { get; init; }

    public required string Sense { get; init; }
}

/// <summary>Smoothing of a run, in the report and in the run lines alike.</summary>
internal sealed record SmoothingDto
{
    public required double Lambda { get; init; }

    public required double NoiseSd { get; init; }

    public required double Edf { get; init; }

    /// <summary>"exact-spline" or "penalized-spline"; null when not known (run lines written before it was recorded).</summary>
    public string? Smoother { get; init; }

    public static SmoothingDto? From(SmoothingSummary? s) => s is null ? null : new()
    {
        Lambda = s.Lambda,
        NoiseSd = s.NoiseSd,
        Edf = s.EffectiveDegreesOfFreedom,
        Smoother = s.Smoother is { } m ? SmoothingMethodNames.Name(m) : null,
    };

    public SmoothingSummary ToSummary()
    {
        var smoother = SmoothingMethodNames.Parse(Smoother);
        if (Smoother is not null && smoother is null)
        {
            throw new FormatException($"unknown smoother '{Smoother}'");
        }

        return new SmoothingSummary(Lambda, NoiseSd, Edf, smoother);
    }
}

/// <summary>Exponential settling of a resting run, in the report and in the run lines alike.</summary>
internal sealed record RelaxationDto
{
    public required double Rate { get; init; }

    public required double RateSe { get; init; }

    public required double RestPhase { get; init; }

    public required double Window { get; init; }

    public required int Samples { get; init; }

    public static RelaxationDto? From(RelaxationFit? x) => x is null ? null : new()
    {
        Rate = x.Rate.Value,
        RateSe = x.Rate.StandardError,
        RestPhase = x.RestPhase,
        Window = x.Window,
        Samples = x.Samples,
    };

    public RelaxationFit ToFit() => new(new Estimate(Rate, RateSe), RestPhase, Window, Samples);
}

/// <summary>Phase diffusion of a run, in the report and in the run lines alike.</summary>
internal sealed record NoiseDto
{
    public required double Diffusion { get; init; }

    public required double DiffusionSe { get; init; }

    public required double MeasurementSd { get; init; }

    public required double PassageRatio { get; init; }

    public required bool Dominated { get; init; }

    public static NoiseDto? From(NoiseEstimate? n) => n is null ? null : new()
    {
        Diffusion = n.Diffusion.Value,
        DiffusionSe = n.Diffusion.StandardError,
        MeasurementSd = n.MeasurementSd,
        PassageRatio = n.PassageRatio,
        Dominated = n.NoiseDominated,
    };

    public NoiseEstimate ToEstimate() => new(new Estimate(Diffusion, DiffusionSe), MeasurementSd, PassageRatio, Dominated);
}

/// <summary>A diagnostic, in every document.</summary>
internal sealed record DiagnosticDto
{
    /// <summary>"error", "warning" or "info".</summary>
    public required string Severity { get; init; }

    public required string Code { get; init; }

    public required string Message { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? File { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public int? Line { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public int? Column { get; init; }

    public static DiagnosticDto From(Diagnostic d) => new()
    {
        Severity = d.Severity switch
        {
            NormalFormFit.Severity.Error => "error",
            NormalFormFit.Severity.Warning => "warning",
            _ => "info",
        },
        Code = d.Code,
        Message = d.Message,
        File = d.File,
        Line = d.Line,
        Column = d.Column,
    };

    public Diagnostic ToDiagnostic() => new(
        Severity switch
        {
            "error" => NormalFormFit.Severity.Error,
            "warning" => NormalFormFit.Severity.Warning,
            "info" => NormalFormFit.Severity.Info,
            var other => throw new FormatException($"unknown severity '{other}'"),
        },
        Code,
        Message,
        File,
        Line,
        Column);
}
