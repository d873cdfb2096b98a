using System.Text;
using System.Text.Json;
using NormalFormFit.Bottleneck;
using NormalFormFit.Field;
using NormalFormFit.Ingest;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Analysis;

/// <summary>
/// Run results as JSON Lines (https://jsonlines.org: one UTF-8 JSON object per line): everything
/// <see cref="OnsetAnalysis.Combine"/> needs from a run, so that runs analysed on different machines combine into
/// the same report as one analysis. Numbers are written so that they read back bit for bit (shortest round-trip
/// form); NaN and ±∞ are written as the strings "NaN", "Infinity" and "-Infinity".
/// </summary>
public static class RunLines
{
    /// <summary>Identifies the layout of a line; a reader refuses other values.</summary>
    public const string Schema = "nffit-run/1";

    /// <summary>Writes one line per run, in order.</summary>
    public static void Write(RunSet set, Stream stream)
    {
        ArgumentNullException.ThrowIfNull(set);
        ArgumentNullException.ThrowIfNull(stream);
        foreach (var run in set.Runs)
        {
            using (var w = new Utf8JsonWriter(stream, new JsonWriterOptions { Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
            {
                WriteRun(w, run, set.ParamUnits);
            }

            stream.WriteByte((byte)'\n');
        }
    }

    /// <summary>
    /// Reads the lines of one or more files, in the order given. Blank lines are skipped. A line that is not a run
    /// result comes back as an error naming file and line.
    /// </summary>
    public static Loaded<RunSet> Read(IReadOnlyList<string> paths)
    {
        ArgumentNullException.ThrowIfNull(paths);
        var runs = new List<RunResult>();
        string? units = null;
        foreach (var path in paths)
        {
            if (!System.IO.File.Exists(path))
            {
                return Loaded.Fail<RunSet>(new Diagnostic(Severity.Error, "missing-file",
                    "the file does not exist; give files written by 'nffit analyze --runs-only'", path));
            }

            var lineNumber = 0;
            try
            {
                foreach (var line in System.IO.File.ReadLines(path, Encoding.UTF8))
                {
                    lineNumber++;
                    if (string.IsNullOrWhiteSpace(line))
                    {
                        continue;
                    }

                    using var doc = JsonDocument.Parse(line);
                    var root = doc.RootElement;
                    if (root.ValueKind != JsonValueKind.Object || !root.TryGetProperty("schema", out var schema) || schema.GetString() != Schema)
                    {
                        return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"the line is not a run result of layout '{Schema}'"));
                    }

                    runs.Add(ReadRun(root));
                    units ??= OptionalString(root, "param_units");
                }
            }
            catch (JsonException e)
            {
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"the line is not valid JSON or misses a field ({e.Message})"));
            }
            catch (InvalidOperationException e)
            {
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"a field has the wrong type ({e.Message})"));
            }
            catch (KeyNotFoundException e)
            {
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"a field is missing ({e.Message})"));
            }
            catch (FormatException e)
            {
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"a number is malformed ({e.Message})"));
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                return Loaded.Fail<RunSet>(new Diagnostic(Severity.Error, "unreadable", $"cannot read the file: {e.Message}", path));
            }
        }

        if (runs.Count == 0)
        {
            return Loaded.Fail<RunSet>(new Diagnostic(Severity.Error, "no-data",
                "the files hold no run results; give files written by 'nffit analyze --runs-only'", paths.Count > 0 ? paths[0] : null));
        }

        return new Loaded<RunSet>(new RunSet(runs, units), []);
    }

    private static Diagnostic BadLine(string path, int line, string what) =>
        new(Severity.Error, "bad-run-line", $"{what}; give files written by 'nffit analyze --runs-only', unedited", path, line);

    private static void WriteRun(Utf8JsonWriter w, RunResult r, string? units)
    {
        w.WriteStartObject();
        w.WriteString("schema", Schema);
        w.WriteString("file", r.File);
        Number(w, "param", r.Param);
        if (units is not null)
        {
            w.WriteString("param_units", units);
        }

        if (r.Label is not null)
        {
            w.WriteString("label", r.Label);
        }

        w.WriteNumber("samples", r.Samples);
        Number(w, "duration", r.Duration);
        Number(w, "turns", r.Turns);
        w.WriteNumber("direction", r.Direction);
        if (r.Smoothing is { } s)
        {
            w.WriteStartObject("smoothing");
            Number(w, "lambda", s.Lambda);
            Number(w, "noise_sd", s.NoiseSd);
            Number(w, "edf", s.EffectiveDegreesOfFreedom);
            if (s.Smoother is { } m)
            {
                w.WriteString("smoother", SmoothingMethodNames.Name(m));
            }

            w.WriteEndObject();
        }

        if (r.Field is { } f)
        {
            w.WriteStartObject("field");
            Numbers(w, "centres", f.Centres);
            Numbers(w, "velocity", f.Velocity);
            Numbers(w, "se", f.StandardError);
            w.WriteNumber("revolutions", f.Revolutions);
            EstimateObject(w, "period", f.Period);
            w.WriteEndObject();
        }

        if (r.Bottleneck is { } b)
        {
            w.WriteStartObject("bottleneck");
            EstimateObject(w, "phase", b.Phase);
            EstimateObject(w, "a", b.A);
            EstimateObject(w, "b", b.B);
            Number(w, "half_window", b.HalfWidth);
            w.WriteNumber("samples", b.Samples);
            Number(w, "residual_rms", b.ResidualRms);
            Number(w, "quartic_bias", b.QuarticBias);
            Extra(w, "residuals", b.Residuals);
            w.WriteEndObject();
        }

        if (r.Period is { } p)
        {
            w.WriteStartObject("period");
            EstimateObject(w, "measured", p.Measured);
            EstimateObject(w, "from_bottleneck", p.FromBottleneck);
            EstimateObject(w, "from_field", p.FromField);
            w.WriteNumber("revolutions", p.Revolutions);
            w.WriteEndObject();
        }

        // Later stages' per-run results, as their records (NaN allowed): combine needs them all.
        w.WriteString("input_kind", Reporting.WireNames.Of(r.InputKind));
        Extra(w, "orbit", r.Orbit);
        Extra(w, "relaxation", r.Relaxation);
        Extra(w, "noise", r.Noise);
        w.WriteStartArray("flags");
        foreach (var flag in r.Flags)
        {
            w.WriteStringValue(Reporting.WireNames.Of(flag));
        }

        w.WriteEndArray();
        w.WriteStartArray("diagnostics");
        foreach (var d in r.Diagnostics)
        {
            Reporting.JsonReport.WriteDiagnostic(w, d);
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }

    private static RunResult ReadRun(JsonElement e)
    {
        SmoothingSummary? smoothing = null;
        if (e.TryGetProperty("smoothing", out var s))
        {
            var name = OptionalString(s, "smoother");
            var smoother = SmoothingMethodNames.Parse(name);
            if (name is not null && smoother is null)
            {
                throw new FormatException($"unknown smoother '{name}'");
            }

            smoothing = new SmoothingSummary(Num(s, "lambda"), Num(s, "noise_sd"), Num(s, "edf"), smoother);
        }

        PhaseField? field = null;
        if (e.TryGetProperty("field", out var f))
        {
            field = new PhaseField(Nums(f, "centres"), Nums(f, "velocity"), Nums(f, "se"), f.GetProperty("revolutions").GetInt32(), Est(f, "period"));
        }

        BottleneckFit? bottleneck = null;
        if (e.TryGetProperty("bottleneck", out var b))
        {
            bottleneck = new BottleneckFit(Est(b, "phase"), Est(b, "a"), Est(b, "b"), Num(b, "half_window"),
                b.GetProperty("samples").GetInt32(), Num(b, "residual_rms"), Num(b, "quartic_bias"))
            {
                Residuals = ReadExtra<ResidualBin[]>(b, "residuals") ?? [],
            };
        }

        PeriodSummary? period = null;
        if (e.TryGetProperty("period", out var p))
        {
            period = new PeriodSummary(Est(p, "measured"), Est(p, "from_bottleneck"), Est(p, "from_field"), p.GetProperty("revolutions").GetInt32());
        }

        var flags = e.GetProperty("flags").EnumerateArray().Select(x => Reporting.WireNames.TryParse(x.GetString(), out RunFlag f) ? f : throw new FormatException($"unknown flag '{x.GetString()}'")).ToList();
        var diags = e.GetProperty("diagnostics").EnumerateArray().Select(ReadDiagnostic).ToList();
        return new RunResult(
            e.GetProperty("file").GetString() ?? string.Empty,
            Num(e, "param"),
            OptionalString(e, "label"),
            e.GetProperty("samples").GetInt32(),
            Num(e, "duration"),
            Num(e, "turns"),
            e.GetProperty("direction").GetInt32(),
            smoothing,
            field,
            bottleneck,
            period,
            flags,
            diags)
        {
            InputKind = OptionalString(e, "input_kind") is not { } kind ? RecordingKind.Phase
                : Reporting.WireNames.TryParse(kind, out RecordingKind k) ? k : throw new FormatException($"unknown input kind '{kind}'"),
            Orbit = ReadExtra<NormalFormFit.Ingest.OrbitSummary>(e, "orbit"),
            Relaxation = ReadExtra<RelaxationFit>(e, "relaxation"),
            Noise = ReadExtra<NoiseEstimate>(e, "noise"),
        };
    }

    private static readonly JsonSerializerOptions ExtraOptions = new()
    {
        NumberHandling = System.Text.Json.Serialization.JsonNumberHandling.AllowNamedFloatingPointLiterals,
    };

    private static void Extra<T>(Utf8JsonWriter w, string name, T? value)
    {
        if (value is null)
        {
            return;
        }

        w.WritePropertyName(name);
        JsonSerializer.Serialize(w, value, ExtraOptions);
    }

    private static T? ReadExtra<T>(JsonElement e, string name) =>
        e.TryGetProperty(name, out var x) && x.ValueKind != JsonValueKind.Null ? x.Deserialize<T>(ExtraOptions) : default;

    private static Diagnostic ReadDiagnostic(JsonElement d)
    {
        var severity = d.GetProperty("severity").GetString() switch
        {
            "error" => Severity.Error,
            "warning" => Severity.Warning,
            "info" => Severity.Info,
            var other => throw new FormatException($"unknown severity '{other}'"),
        };
        return new Diagnostic(
            severity,
            d.GetProperty("code").GetString() ?? string.Empty,
            d.GetProperty("message").GetString() ?? string.Empty,
            OptionalString(d, "file"),
            d.TryGetProperty("line", out var line) ? line.GetInt32() : null,
            d.TryGetProperty("column", out var col) ? col.GetInt32() : null);
    }

    private static string? OptionalString(JsonElement e, string name) =>
        e.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.String ? v.GetString() : null;

    private static void Number(Utf8JsonWriter w, string name, double v)
    {
        w.WritePropertyName(name);
        NumberValue(w, v);
    }

    private static void NumberValue(Utf8JsonWriter w, double v)
    {
        if (double.IsFinite(v))
        {
            w.WriteNumberValue(v);
        }
        else
        {
            w.WriteStringValue(double.IsNaN(v) ? "NaN" : v > 0 ? "Infinity" : "-Infinity");
        }
    }

    private static void Numbers(Utf8JsonWriter w, string name, double[] values)
    {
        w.WriteStartArray(name);
        foreach (var v in values)
        {
            NumberValue(w, v);
        }

        w.WriteEndArray();
    }

    private static void EstimateObject(Utf8JsonWriter w, string name, Estimate e)
    {
        w.WriteStartObject(name);
        Number(w, "value", e.Value);
        Number(w, "se", e.StandardError);
        w.WriteEndObject();
    }

    private static double Num(JsonElement e, string name) => Value(e.GetProperty(name));

    private static double Value(JsonElement v) => v.ValueKind switch
    {
        JsonValueKind.Number => v.GetDouble(),
        JsonValueKind.String => v.GetString() switch
        {
            "NaN" => double.NaN,
            "Infinity" => double.PositiveInfinity,
            "-Infinity" => double.NegativeInfinity,
            var other => throw new FormatException($"'{other}' is not a number"),
        },
        _ => throw new FormatException($"expected a number, found {v.ValueKind}"),
    };

    private static double[] Nums(JsonElement e, string name) => [.. e.GetProperty(name).EnumerateArray().Select(Value)];

    private static Estimate Est(JsonElement e, string name)
    {
        var o = e.GetProperty(name);
        return new Estimate(Num(o, "value"), Num(o, "se"));
    }
}
