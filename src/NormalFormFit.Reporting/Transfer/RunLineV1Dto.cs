using System.Text.Json.Serialization;
using NormalFormFit.Analysis;
using NormalFormFit.Bottleneck;
using NormalFormFit.Field;
using NormalFormFit.Ingest;

namespace NormalFormFit.Reporting.Transfer;

// Run lines of layout nffit-run/1, written by versions before nffit-run/2, read only. FROZEN: these types describe files
// that exist; never rename a property or change a [JsonPropertyName]. The snake_case keys follow the naming policy; the
// orbit, relaxation, noise and residual blocks were written by reflection over the program's own records, so their
// PascalCase keys are spelled out. Estimates are objects {value, se} ({Value, StandardError} in the reflected blocks);
// non-finite numbers are the strings "NaN", "Infinity", "-Infinity" (read by JsonConventions' number converter).

/// <summary>One run line of layout <c>nffit-run/1</c>.</summary>
internal sealed record RunLineV1Dto
{
    public required string Schema { get; init; }

    public required string File { get; init; }

    public required double Param { get; init; }

    public string? ParamUnits { get; init; }

    public string? Label { get; init; }

    public required int Samples { get; init; }

    public required double Duration { get; init; }

    public required double Turns { get; init; }

    public required int Direction { get; init; }

    public SmoothingDto? Smoothing { get; init; }

    public FieldV1? Field { get; init; }

    public BottleneckV1? Bottleneck { get; init; }

    public PeriodV1? Period { get; init; }

    /// <summary>Absent in the earliest lines, which held phase recordings only.</summary>
    public string? InputKind { get; init; }

    public OrbitV1? Orbit { get; init; }

    public RelaxationV1? Relaxation { get; init; }

    public NoiseV1? Noise { get; init; }

    public required IReadOnlyList<string> Flags { get; init; }

    public required IReadOnlyList<DiagnosticDto> Diagnostics { get; init; }

    public RunResult ToRunResult() => new(
        File,
        Param,
        Label,
        Samples,
        Duration,
        Turns,
        Direction,
        Smoothing?.ToSummary(),
        Field is { } f ? new PhaseField(f.Centres, f.Velocity, f.Se, f.Revolutions, f.Period.ToEstimate()) : null,
        Bottleneck is { } b
            ? new BottleneckFit(b.Phase.ToEstimate(), b.A.ToEstimate(), b.B.ToEstimate(), b.HalfWindow, b.Samples, b.ResidualRms, b.QuarticBias)
            {
                Residuals = b.Residuals is { } bins ? [.. bins.Select(x => new ResidualBin(x.Offset, x.Residual, x.StandardError, x.Samples))] : [],
            }
            : null,
        Period is { } p ? new PeriodSummary(p.Measured.ToEstimate(), p.FromBottleneck.ToEstimate(), p.FromField.ToEstimate(), p.Revolutions) : null,
        [.. Flags.Select(WireNames.ParseFlag)],
        [.. Diagnostics.Select(d => d.ToDiagnostic())])
    {
        InputKind = WireNames.ParseRecordingKind(InputKind),
        Orbit = Orbit is { } o
            ? new OrbitSummary(new Ellipse(o.Ellipse.CentreX, o.Ellipse.CentreY, o.Ellipse.SemiMajor, o.Ellipse.SemiMinor, o.Ellipse.Tilt, o.Ellipse.Conic), o.RmsDeviation, o.MinRadius, o.IsEllipse, o.Sense)
            : null,
        Relaxation = Relaxation is { } x ? new RelaxationFit(x.Rate.ToEstimate(), x.RestPhase, x.Window, x.Samples) : null,
        Noise = Noise is { } n ? new NoiseEstimate(n.Diffusion.ToEstimate(), n.MeasurementSd, n.PassageRatio, n.NoiseDominated) : null,
    };

    /// <summary><c>{"value", "se"}</c>.</summary>
    internal sealed record EstimateV1
    {
        public required double Value { get; init; }

        public required double Se { get; init; }

        public Estimate ToEstimate() => new(Value, Se);
    }

    /// <summary><c>{"Value", "StandardError"}</c> (reflected).</summary>
    internal sealed record ReflectedEstimateV1
    {
        [JsonPropertyName("Value")]
        public required double Value { get; init; }

        [JsonPropertyName("StandardError")]
        public required double StandardError { get; init; }

        public Estimate ToEstimate() => new(Value, StandardError);
    }

    internal sealed record FieldV1
    {
        public required double[] Centres { get; init; }

        public required double[] Velocity { get; init; }

        public required double[] Se { get; init; }

        public required int Revolutions { get; init; }

        public required EstimateV1 Period { get; init; }
    }

    internal sealed record BottleneckV1
    {
        public required EstimateV1 Phase { get; init; }

        public required EstimateV1 A { get; init; }

        public required EstimateV1 B { get; init; }

        public required double HalfWindow { get; init; }

        public required int Samples { get; init; }

        public required double ResidualRms { get; init; }

        public required double QuarticBias { get; init; }

        public IReadOnlyList<ResidualV1>? Residuals { get; init; }
    }

    internal sealed record ResidualV1
    {
        [JsonPropertyName("Offset")]
        public required double Offset { get; init; }

        [JsonPropertyName("Residual")]
        public required double Residual { get; init; }

        [JsonPropertyName("StandardError")]
        public required double StandardError { get; init; }

        [JsonPropertyName("Samples")]
        public required int Samples { get; init; }
    }

    internal sealed record PeriodV1
    {
        public required EstimateV1 Measured { get; init; }

        public required EstimateV1 FromBottleneck { get; init; }

        public required EstimateV1 FromField { get; init; }

        public required int Revolutions { get; init; }
    }

    internal sealed record OrbitV1
    {
        [JsonPropertyName("Ellipse")]
        public required EllipseV1 Ellipse { get; init; }

        [JsonPropertyName("RmsDeviation")]
        public required double RmsDeviation { get; init; }

        [JsonPropertyName("MinRadius")]
        public required double MinRadius { get; init; }

        [JsonPropertyName("IsEllipse")]
        public required bool IsEllipse { get; init; }

        [JsonPropertyName("Sense")]
        public required string Sense { get; init; }
    }

    internal sealed record EllipseV1
    {
        [JsonPropertyName("CentreX")]
        public required double CentreX { get; init; }

        [JsonPropertyName("CentreY")]
        public required double CentreY { get; init; }

        [JsonPropertyName("SemiMajor")]
        public required double SemiMajor { get; init; }

        [JsonPropertyName("SemiMinor")]
        public required double SemiMinor { get; init; }

        [JsonPropertyName("Tilt")]
        public required double Tilt { get; init; }

        [JsonPropertyName("Conic")]
        public required double[] Conic { get; init; }
    }

    internal sealed record RelaxationV1
    {
        [JsonPropertyName("Rate")]
        public required ReflectedEstimateV1 Rate { get; init; }

        [JsonPropertyName("RestPhase")]
        public required double RestPhase { get; init; }

        [JsonPropertyName("Window")]
        public required double Window { get; init; }

        [JsonPropertyName("Samples")]
        public required int Samples { get; init; }
    }

    internal sealed record NoiseV1
    {
        [JsonPropertyName("Diffusion")]
        public required ReflectedEstimateV1 Diffusion { get; init; }

        [JsonPropertyName("MeasurementSd")]
        public required double MeasurementSd { get; init; }

        [JsonPropertyName("PassageRatio")]
        public required double PassageRatio { get; init; }

        [JsonPropertyName("NoiseDominated")]
        public required bool NoiseDominated { get; init; }
    }
}
