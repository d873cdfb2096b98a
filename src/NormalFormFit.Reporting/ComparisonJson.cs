using System.Text.Json;
using NormalFormFit.Compare;
using NormalFormFit.Reporting.Transfer;

namespace NormalFormFit.Reporting;

/// <summary>
/// Writes a <see cref="ModelComparison"/> as a JSON document with a <c>model</c> object. Keys are a contract:
/// <c>expression</c>, <c>parameters[]</c> {<c>name</c>, <c>value</c>, <c>se</c>}, <c>map</c> {<c>c0</c>, <c>c1</c>},
/// <c>onset</c> {<c>value</c>, <c>ci95_low</c>, <c>ci95_high</c>}, <c>units</c> {<c>param</c>, <c>time</c>}, <c>consistent</c>, <c>statistic</c>,
/// <c>worst_runs[]</c>; more keys may be added. The layout is <see cref="ModelDto"/>'s, written by the convention of
/// <see cref="JsonConventions"/> (non-finite numbers as null).
/// </summary>
public static class ComparisonJson
{
    /// <summary>A whole document <c>{ "schema", "tool_version", "model": … }</c>, indented UTF-8.</summary>
    /// <param name="comparison">The comparison.</param>
    /// <param name="stream">Where to write.</param>
    /// <param name="toolVersion">The tool's version, or null to leave the key out.</param>
    /// <param name="paramUnits">Unit of the control parameter (<c>units.param</c>; null when unknown).</param>
    /// <param name="timeUnit">Unit of time (<c>units.time</c>; null when unknown).</param>
    public static void Write(ModelComparison comparison, Stream stream, string? toolVersion = null, string? paramUnits = null, string? timeUnit = null)
    {
        ArgumentNullException.ThrowIfNull(comparison);
        ArgumentNullException.ThrowIfNull(stream);
        var document = new ComparisonDocumentDto { Schema = JsonReport.SchemaVersion, ToolVersion = toolVersion, Model = ModelDto.From(comparison) with { Units = new UnitsDto { Param = paramUnits, Time = timeUnit } } };
        using var w = new Utf8JsonWriter(stream, JsonConventions.Writer(indented: true));
        JsonSerializer.Serialize(w, document, JsonConventions.Options);
    }
}
