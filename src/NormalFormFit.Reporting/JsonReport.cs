using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Reporting.Transfer;

namespace NormalFormFit.Reporting;

/// <summary>
/// Writes the JSON report. The key names documented in README ("onset.from_bottleneck", "runs[].bottleneck.a",
/// …) are a contract scripts rely on; new keys may be added, none renamed. The layout is <see cref="ReportDto"/>'s,
/// written by the convention of <see cref="JsonConventions"/> (snake_case keys, non-finite numbers as null).
/// </summary>
public static class JsonReport
{
    /// <summary>Version of the report layout.</summary>
    public const string SchemaVersion = "1";

    /// <summary>Writes <paramref name="report"/> to <paramref name="stream"/> as indented UTF-8 JSON.</summary>
    public static void Write(AnalysisReport report, Stream stream, string? toolVersion = null)
    {
        ArgumentNullException.ThrowIfNull(report);
        ArgumentNullException.ThrowIfNull(stream);
        using var w = new Utf8JsonWriter(stream, JsonConventions.Writer(indented: true));
        JsonSerializer.Serialize(w, ReportDto.From(report, SchemaVersion, toolVersion), JsonConventions.Options);
    }
}
