using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Onset;

namespace NormalFormFit.Reporting;

/// <summary>
/// Writes the JSON report. The key names documented in README ("onset.from_bottleneck", "runs[].bottleneck.a",
/// …) are a contract scripts rely on; new keys may be added, none renamed. Non-finite numbers are written as null.
/// </summary>
public static class JsonReport
{
    /// <summary>Version of the report layout.</summary>
    public const string SchemaVersion = "1";

    /// <summary>Writes <paramref name="report"/> to <paramref name="stream"/> as indented UTF-8 JSON.</summary>
    public static void Write(AnalysisReport report, Stream stream, string? toolVersion = null)
    {
        ArgumentNullException.ThrowIfNull(report);
        using var w = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping });
        w.WriteStartObject();
        w.WriteString("schema", SchemaVersion);
        if (toolVersion is not null)
        {
            w.WriteString("tool_version", toolVersion);
        }

        if (report.ParamUnits is not null)
        {
            w.WriteString("param_units", report.ParamUnits);
        }

        w.WriteStartObject("onset");
        WriteOnset(w, "from_bottleneck", report.FromBottleneck);
        WriteOnset(w, "from_period", report.FromPeriod);
        w.WriteStartObject("agreement");
        Number(w, "z", report.Agreement.Z);
        w.WriteBoolean("consistent", report.Agreement.Consistent);
        if (report.Agreement.Reason is { } reason)
        {
            w.WriteString("reason", reason);
        }

        w.WriteEndObject();
        w.WriteEndObject();

        w.WriteStartObject("scaling");
        var s = report.Scaling;
        Number(w, "exponent", s?.Exponent.Value ?? double.NaN);
        Number(w, "exponent_se", s?.Exponent.StandardError ?? double.NaN);
        Number(w, "ci95_low", s?.Ci95.Low ?? double.NaN);
        Number(w, "ci95_high", s?.Ci95.High ?? double.NaN);
        w.WriteString("verdict", s?.Verdict ?? "undetermined");
        w.WriteString("evidence", s?.Evidence ?? "fewer than four runs with timed periods");
        Number(w, "onset", s?.Onset.Value ?? double.NaN);
        Number(w, "runs", s?.Runs ?? 0);
        w.WriteEndObject();

        w.WriteStartArray("runs");
        foreach (var r in report.Runs)
        {
            WriteRun(w, r);
        }

        w.WriteEndArray();
        w.WriteStartArray("diagnostics");
        foreach (var d in report.AllDiagnostics)
        {
            WriteDiagnostic(w, d);
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }

    /// <summary>Writes one diagnostic as an object.</summary>
    public static void WriteDiagnostic(Utf8JsonWriter w, Diagnostic d)
    {
        ArgumentNullException.ThrowIfNull(w);
        ArgumentNullException.ThrowIfNull(d);
        w.WriteStartObject();
        w.WriteString("severity", d.Severity.ToString().ToLowerInvariant());
        w.WriteString("code", d.Code);
        w.WriteString("message", d.Message);
        if (d.File is not null)
        {
            w.WriteString("file", d.File);
        }

        if (d.Line is { } line)
        {
            w.WriteNumber("line", line);
        }

        if (d.Column is { } col)
        {
            w.WriteNumber("column", col);
        }

        w.WriteEndObject();
    }

    private static void WriteOnset(Utf8JsonWriter w, string name, OnsetEstimate e)
    {
        w.WriteStartObject(name);
        Number(w, "value", e.Value);
        Number(w, "se", e.StandardError);
        Number(w, "ci95_low", e.Ci95.Low);
        Number(w, "ci95_high", e.Ci95.High);
        w.WriteNumber("runs", e.Runs);
        Number(w, "trend_degree", e.Trend?.Degree ?? double.NaN);
        w.WriteEndObject();
    }

    private static void WriteRun(Utf8JsonWriter w, RunResult r)
    {
        w.WriteStartObject();
        w.WriteString("file", r.File);
        Number(w, "param", r.Param);
        if (r.Label is not null)
        {
            w.WriteString("label", r.Label);
        }

        w.WriteNumber("samples", r.Samples);
        Number(w, "turns", r.Turns);
        w.WriteNumber("direction", r.Direction);
        if (r.Bottleneck is { } b)
        {
            w.WriteStartObject("bottleneck");
            Number(w, "phase", b.Phase.Value);
            Number(w, "phase_se", b.Phase.StandardError);
            Number(w, "a", b.A.Value);
            Number(w, "a_se", b.A.StandardError);
            Number(w, "b", b.B.Value);
            Number(w, "b_se", b.B.StandardError);
            Number(w, "half_window", b.HalfWidth);
            w.WriteEndObject();
        }
        else
        {
            w.WriteNull("bottleneck");
        }

        w.WriteStartObject("period");
        var p = r.Period;
        Number(w, "measured", p?.Measured.Value ?? double.NaN);
        Number(w, "measured_se", p?.Measured.StandardError ?? double.NaN);
        Number(w, "from_bottleneck", p?.FromBottleneck.Value ?? double.NaN);
        Number(w, "from_field", p?.FromField.Value ?? double.NaN);
        Number(w, "from_field_se", p?.FromField.StandardError ?? double.NaN);
        w.WriteNumber("revolutions", p?.Revolutions ?? 0);
        w.WriteEndObject();
        if (r.Smoothing is { } sm)
        {
            w.WriteStartObject("smoothing");
            Number(w, "lambda", sm.Lambda);
            Number(w, "noise_sd", sm.NoiseSd);
            Number(w, "edf", sm.EffectiveDegreesOfFreedom);
            w.WriteEndObject();
        }

        w.WriteString("input_kind", r.InputKind);
        if (r.Orbit is { } o)
        {
            w.WriteStartObject("orbit");
            Number(w, "centre_x", o.Ellipse.CentreX);
            Number(w, "centre_y", o.Ellipse.CentreY);
            Number(w, "semi_major", o.Ellipse.SemiMajor);
            Number(w, "semi_minor", o.Ellipse.SemiMinor);
            Number(w, "tilt_deg", o.Ellipse.Tilt * 180 / Math.PI);
            Number(w, "rms_deviation", o.RmsDeviation);
            w.WriteBoolean("is_ellipse", o.IsEllipse);
            w.WriteString("phase", o.IsProtophase ? "protophase" : "ellipse-angle");
            w.WriteString("sense", o.Sense);
            w.WriteEndObject();
        }

        w.WriteStartArray("flags");
        foreach (var f in r.Flags)
        {
            w.WriteStringValue(f);
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }

    private static void Number(Utf8JsonWriter w, string name, double v)
    {
        if (double.IsFinite(v))
        {
            w.WriteNumber(name, v);
        }
        else
        {
            w.WriteNull(name);
        }
    }
}
