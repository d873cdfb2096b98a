using System.Text.Json.Serialization;
using NormalFormFit.Compare;

namespace NormalFormFit.Reporting.Transfer;

// The model comparison's JSON (ComparisonJson), key for key in the order written. The keys named in ComparisonJson's
// summary are a contract; more keys may be added.

/// <summary>The whole document: <c>{ "schema", "tool_version", "model": … }</c>.</summary>
internal sealed record ComparisonDocumentDto
{
    public required string Schema { get; init; }

    [JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)]
    public string? ToolVersion { get; init; }

    public required ModelDto Model { get; init; }
}

/// <summary><c>model</c>: the fitted reduced model, its onset, the verdict and where it misfits.</summary>
internal sealed record ModelDto
{
    public required string Expression { get; init; }

    public required IReadOnlyList<ParameterDto> Parameters { get; init; }

    public required MapDto Map { get; init; }

    public required ModelOnsetDto Onset { get; init; }

    /// <summary>Units of μ_lab (and the onset) and of time, as in the analysis report; null when unknown.</summary>
    public UnitsDto Units { get; init; } = new();

    public bool Consistent { get; init; }

    /// <summary>Null for a planar system, which has no phase to turn.</summary>
    public required string? TurningSense { get; init; }

    public required string Caution { get; init; }

    public double Statistic { get; init; }

    public double PValue { get; init; }

    public double ExpectedStatistic { get; init; }

    public int Replicates { get; init; }

    public int FailedReplicates { get; init; }

    public int Points { get; init; }

    public required IReadOnlyList<RunMisfitDto> WorstRuns { get; init; }

    /// <summary>Null for a planar system, which is compared on periods, not over phase regions.</summary>
    public required IReadOnlyList<RegionMisfitDto>? WorstRegions { get; init; }

    public required IReadOnlyList<RunMisfitDto> Runs { get; init; }

    /// <summary>Null for a planar system (as <see cref="WorstRegions"/>).</summary>
    public required IReadOnlyList<RegionMisfitDto>? Regions { get; init; }

    public required IReadOnlyList<DiagnosticDto> Diagnostics { get; init; }

    public static ModelDto From(ModelComparison c) => new()
    {
        Expression = c.Expression,
        Parameters = [.. c.Parameters.Select(ParameterDto.From)],
        Map = new MapDto { C0 = c.Offset.Value, C0Se = c.Offset.StandardError, C1 = c.Scale.Value, C1Se = c.Scale.StandardError },
        Onset = new ModelOnsetDto { Value = c.Onset.Value, Se = c.Onset.StandardError, Ci95Low = c.OnsetCi95.Low, Ci95High = c.OnsetCi95.High },
        Consistent = c.Consistent,
        Statistic = c.Statistic,
        PValue = c.PValue,
        TurningSense = c.IsSystem ? null : WireNames.Of(c.Sense),
        Caution = TextReport.Caution,
        ExpectedStatistic = c.Expected,
        Replicates = c.ReplicateStatistics.Count + c.FailedReplicates,
        FailedReplicates = c.FailedReplicates,
        Points = c.Points,
        WorstRuns = [.. c.WorstRuns.Select(RunMisfitDto.From)],
        WorstRegions = c.IsSystem ? null : [.. c.WorstRegions.Select(RegionMisfitDto.Of)],
        Runs = [.. c.Runs.Select(RunMisfitDto.From)],
        Regions = c.IsSystem ? null : [.. c.Regions.Select(RegionMisfitDto.Of)],
        Diagnostics = [.. c.Diagnostics.Select(DiagnosticDto.From)],
    };
}

/// <summary><c>model.parameters[]</c> (a held parameter has its value as both interval bounds).</summary>
internal sealed record ParameterDto
{
    public required string Name { get; init; }

    public double Value { get; init; }

    public double Se { get; init; }

    public double BiasRemoved { get; init; }

    public double Ci95Low { get; init; }

    public double Ci95High { get; init; }

    public bool Fixed { get; init; }

    public static ParameterDto From(FittedParameter p) => new()
    {
        Name = p.Name,
        Value = p.Value,
        Se = p.StandardError,
        BiasRemoved = p.Bias,
        Ci95Low = p.Fixed ? p.Value : p.Ci95.Low,
        Ci95High = p.Fixed ? p.Value : p.Ci95.High,
        Fixed = p.Fixed,
    };
}

/// <summary><c>model.map</c>: μ_model = c0 + c1·μ_lab.</summary>
internal sealed record MapDto
{
    public double C0 { get; init; }

    public double C0Se { get; init; }

    public double C1 { get; init; }

    public double C1Se { get; init; }
}

/// <summary><c>model.onset</c>, in the laboratory's μ.</summary>
internal sealed record ModelOnsetDto
{
    public double Value { get; init; }

    public double Se { get; init; }

    public double Ci95Low { get; init; }

    public double Ci95High { get; init; }
}

/// <summary><c>model.runs[]</c>, <c>model.worst_runs[]</c>.</summary>
internal sealed record RunMisfitDto
{
    public required string File { get; init; }

    public double Param { get; init; }

    public int Points { get; init; }

    public double Ratio { get; init; }

    public double MeanResidual { get; init; }

    public double PeriodResidual { get; init; }

    public static RunMisfitDto From(RunMisfit r) => new()
    {
        File = r.File,
        Param = r.Param,
        Points = r.Points,
        Ratio = r.Ratio,
        MeanResidual = r.MeanResidual,
        PeriodResidual = r.PeriodResidual,
    };
}

/// <summary><c>model.regions[]</c>, <c>model.worst_regions[]</c>: phase intervals [from, to).</summary>
internal sealed record RegionMisfitDto
{
    public double From { get; init; }

    public double To { get; init; }

    public int Points { get; init; }

    public double Ratio { get; init; }

    public double MeanResidual { get; init; }

    public static RegionMisfitDto Of(RegionMisfit g) => new()
    {
        From = g.From,
        To = g.To,
        Points = g.Points,
        Ratio = g.Ratio,
        MeanResidual = g.MeanResidual,
    };
}
