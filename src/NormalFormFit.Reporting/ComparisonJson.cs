using System.Text.Json;
using NormalFormFit.Compare;

namespace NormalFormFit.Reporting;

/// <summary>
/// Writes a <see cref="ModelComparison"/> as the <c>model</c> object of the JSON report. Keys are a contract:
/// <c>expression</c>, <c>parameters[]</c> {<c>name</c>, <c>value</c>, <c>se</c>}, <c>map</c> {<c>c0</c>, <c>c1</c>},
/// <c>onset</c> {<c>value</c>, <c>ci95_low</c>, <c>ci95_high</c>}, <c>consistent</c>, <c>statistic</c>,
/// <c>worst_runs[]</c>; more keys may be added. Non-finite numbers are written as null.
/// </summary>
public static class ComparisonJson
{
    /// <summary>Writes <c>"model": { … }</c> into an object being written.</summary>
    public static void WriteModel(Utf8JsonWriter w, ModelComparison c)
    {
        ArgumentNullException.ThrowIfNull(w);
        ArgumentNullException.ThrowIfNull(c);
        w.WriteStartObject("model");
        w.WriteString("expression", c.Expression);
        w.WriteStartArray("parameters");
        foreach (var p in c.Parameters)
        {
            w.WriteStartObject();
            w.WriteString("name", p.Name);
            Number(w, "value", p.Value);
            Number(w, "se", p.StandardError);
            Number(w, "bias_removed", p.Bias);
            Number(w, "ci95_low", p.Fixed ? p.Value : p.Ci95.Low);
            Number(w, "ci95_high", p.Fixed ? p.Value : p.Ci95.High);
            w.WriteBoolean("fixed", p.Fixed);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteStartObject("map");
        Number(w, "c0", c.Offset.Value);
        Number(w, "c0_se", c.Offset.StandardError);
        Number(w, "c1", c.Scale.Value);
        Number(w, "c1_se", c.Scale.StandardError);
        w.WriteEndObject();
        w.WriteStartObject("onset");
        Number(w, "value", c.Onset.Value);
        Number(w, "se", c.Onset.StandardError);
        Number(w, "ci95_low", c.OnsetCi95.Low);
        Number(w, "ci95_high", c.OnsetCi95.High);
        w.WriteEndObject();
        w.WriteBoolean("consistent", c.Consistent);
        Number(w, "statistic", c.Statistic);
        Number(w, "p_value", c.PValue);
        Number(w, "expected_statistic", c.Expected);
        Number(w, "replicates", c.ReplicateStatistics.Count + c.FailedReplicates);
        Number(w, "failed_replicates", c.FailedReplicates);
        Number(w, "points", c.Points);
        w.WriteStartArray("worst_runs");
        foreach (var r in c.WorstRuns)
        {
            WriteRun(w, r);
        }

        w.WriteEndArray();
        w.WriteStartArray("worst_regions");
        foreach (var g in c.WorstRegions)
        {
            WriteRegion(w, g);
        }

        w.WriteEndArray();
        w.WriteStartArray("runs");
        foreach (var r in c.Runs)
        {
            WriteRun(w, r);
        }

        w.WriteEndArray();
        w.WriteStartArray("regions");
        foreach (var g in c.Regions)
        {
            WriteRegion(w, g);
        }

        w.WriteEndArray();
        w.WriteStartArray("diagnostics");
        foreach (var d in c.Diagnostics)
        {
            JsonReport.WriteDiagnostic(w, d);
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }

    /// <summary>A whole document <c>{ "schema", "tool_version", "model": … }</c>.</summary>
    public static void Write(ModelComparison comparison, Stream stream, string? toolVersion = null)
    {
        using var w = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping });
        w.WriteStartObject();
        w.WriteString("schema", JsonReport.SchemaVersion);
        if (toolVersion is not null)
        {
            w.WriteString("tool_version", toolVersion);
        }

        WriteModel(w, comparison);
        w.WriteEndObject();
    }

    private static void WriteRun(Utf8JsonWriter w, RunMisfit r)
    {
        w.WriteStartObject();
        w.WriteString("file", r.File);
        Number(w, "param", r.Param);
        Number(w, "points", r.Points);
        Number(w, "ratio", r.Ratio);
        Number(w, "mean_residual", r.MeanResidual);
        Number(w, "period_residual", r.PeriodResidual);
        w.WriteEndObject();
    }

    private static void WriteRegion(Utf8JsonWriter w, RegionMisfit g)
    {
        w.WriteStartObject();
        Number(w, "from", g.From);
        Number(w, "to", g.To);
        Number(w, "points", g.Points);
        Number(w, "ratio", g.Ratio);
        Number(w, "mean_residual", g.MeanResidual);
        w.WriteEndObject();
    }

    private static void Number(Utf8JsonWriter w, string name, double value) => JsonReport.Number(w, name, value);
}
