using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Onset;
using NormalFormFit.Smoothing;

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
        WriteOnset(w, "from_bottleneck", report.FromBottleneck, report.Verdict);
        WriteOnset(w, "from_period", report.FromPeriod, report.Verdict);
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
        w.WriteString("verdict", WireNames.Of(report.Verdict.Kind));
        w.WriteString("evidence", report.Verdict.Evidence);
        Number(w, "onset", s?.Onset.Value ?? double.NaN);
        Number(w, "runs", s?.Runs ?? 0);
        w.WriteString("form", WireNames.Of(s?.Form ?? Scaling.ScalingForm.PowerLaw));
        Number(w, "offset", s?.Offset?.Value ?? double.NaN);
        Number(w, "offset_se", s?.Offset?.StandardError ?? double.NaN);
        ScalingEvidence(w, report.Verdict);
        w.WriteEndObject();
        NextMeasurements(w, report);

        w.WriteStartArray("runs");
        foreach (var r in report.Runs)
        {
            WriteRun(w, r, report.FlagsOf(r));
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

    private static void WriteOnset(Utf8JsonWriter w, string name, OnsetEstimate e, Scaling.OnsetVerdict verdict)
    {
        w.WriteStartObject(name);
        Number(w, "value", e.Value);
        Number(w, "se", e.StandardError);
        Number(w, "ci95_low", e.Ci95.Low);
        Number(w, "ci95_high", e.Ci95.High);
        w.WriteNumber("runs", e.Runs);
        Number(w, "trend_degree", e.Trend?.Degree ?? double.NaN);
        if (e.Curve is { } curve)
        {
            // Additive key: "polynomial" (trend_degree tells which) or "square-root-with-offset" (trend_degree null).
            w.WriteString("law", WireNames.Of(curve.Law));
            w.WriteString("law_description", curve.Description);
        }
        w.WriteString("status", WireNames.Of(verdict.RouteStatus));
        if (verdict.RouteStatusReason is { } why)
        {
            w.WriteString("status_reason", why);
        }

        w.WriteNumber("runs_below_onset", e.RunsBelowOnset);
        w.WriteEndObject();
    }

    private static void WriteRun(Utf8JsonWriter w, RunResult r, IReadOnlyList<RunFlag> flags)
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
            if (sm.Smoother is { } m)
            {
                w.WriteString("smoother", SmoothingMethodNames.Name(m));
            }
            else
            {
                w.WriteNull("smoother");
            }

            w.WriteEndObject();
        }

        RunEvidence(w, r);

        w.WriteString("input_kind", WireNames.Of(r.InputKind));
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
        foreach (var f in flags)
        {
            w.WriteStringValue(WireNames.Of(f));
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }

    // scaling.weights {saddle_node, homoclinic, finite_period}, scaling.laws[], scaling.minimum_speed.
    private static void ScalingEvidence(Utf8JsonWriter w, Scaling.OnsetVerdict s)
    {
        if (s.Weights is { } wt)
        {
            w.WriteStartObject("weights");
            Number(w, "saddle_node", wt.SaddleNode);
            Number(w, "homoclinic", wt.Homoclinic);
            Number(w, "finite_period", wt.FinitePeriod);
            w.WriteEndObject();
            w.WriteStartArray("laws");
            foreach (var f in wt.Fits)
            {
                w.WriteStartObject();
                w.WriteString("law", WireNames.Of(f.Law));
                Number(w, "onset", f.Onset);
                Number(w, "aic", f.Aic);
                w.WriteBoolean("onset_at_search_limit", f.AtBoundary);
                w.WriteEndObject();
            }

            w.WriteEndArray();
        }
        else
        {
            w.WriteNull("weights");
        }

        if (s.MinimumSpeed is { } m)
        {
            w.WriteStartObject("minimum_speed");
            w.WriteBoolean("reaches_zero", m.ReachesZero);
            Number(w, "zero_at", m.Onset);
            Number(w, "ci95_low", m.Ci95.Low);
            Number(w, "ci95_high", m.Ci95.High);
            w.WriteNumber("runs_with_bottleneck", m.RunsWithBottleneck);
            w.WriteNumber("turning_runs", m.TurningRuns);
            w.WriteEndObject();
        }
    }

    private static void NextMeasurements(Utf8JsonWriter w, AnalysisReport report)
    {
        w.WriteStartArray("next_measurements");
        foreach (var m in report.NextMeasurements)
        {
            w.WriteStartObject();
            w.WriteString("route", WireNames.Of(m.Route));
            Number(w, "param", m.Param);
            w.WriteNumber("runs", m.Runs);
            Number(w, "expected_period", m.ExpectedPeriod);
            Number(w, "current_ci95_low", m.CurrentCi95.Low);
            Number(w, "current_ci95_high", m.CurrentCi95.High);
            Number(w, "expected_ci95_low", m.ExpectedCi95.Low);
            Number(w, "expected_ci95_high", m.ExpectedCi95.High);
            w.WriteEndObject();
        }

        w.WriteEndArray();
    }

    // runs[].relaxation and runs[].noise.
    private static void RunEvidence(Utf8JsonWriter w, RunResult r)
    {
        if (r.Relaxation is { } x)
        {
            w.WriteStartObject("relaxation");
            Number(w, "rate", x.Rate.Value);
            Number(w, "rate_se", x.Rate.StandardError);
            Number(w, "rest_phase", x.RestPhase);
            Number(w, "window", x.Window);
            w.WriteNumber("samples", x.Samples);
            w.WriteEndObject();
        }
        else
        {
            w.WriteNull("relaxation");
        }

        if (r.Noise is { } nz)
        {
            w.WriteStartObject("noise");
            Number(w, "diffusion", nz.Diffusion.Value);
            Number(w, "diffusion_se", nz.Diffusion.StandardError);
            Number(w, "measurement_sd", nz.MeasurementSd);
            Number(w, "passage_ratio", nz.PassageRatio);
            w.WriteBoolean("dominated", nz.NoiseDominated);
            w.WriteEndObject();
        }
        else
        {
            w.WriteNull("noise");
        }
    }

    /// <summary>Writes a number, or null when it is not finite (the report's convention for "not estimated").</summary>
    internal static void Number(Utf8JsonWriter w, string name, double v)
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
