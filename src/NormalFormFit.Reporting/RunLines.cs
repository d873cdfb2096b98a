using System.Globalization;
using System.Text;
using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Reporting.Transfer;

namespace NormalFormFit.Reporting;

/// <summary>
/// Run results as JSON Lines (https://jsonlines.org: one UTF-8 JSON object per line): everything
/// <see cref="OnsetAnalysis.Combine"/> needs from a run, so that runs analysed on different machines combine into
/// the same report as one analysis. A line is a <see cref="RunLineDto"/> written by the convention of every JSON
/// document (<see cref="JsonConventions"/>: snake_case keys, numbers in shortest round-trip form so that they read
/// back bit for bit, non-finite numbers as null, read back as NaN). Lines of the earlier layout
/// <see cref="SchemaV1"/> still read (<see cref="RunLineV1Dto"/>).
/// </summary>
public static class RunLines
{
    /// <summary>Identifies the layout of the lines written now; a reader refuses layouts it does not know.</summary>
    public const string Schema = "nffit-run/2";

    /// <summary>The earlier layout (estimates as objects, some blocks in PascalCase, NaN as a string): read, not written.</summary>
    public const string SchemaV1 = "nffit-run/1";

    /// <summary>Longest line read (16 Mi characters; a run line is some tens of kilobytes).</summary>
    public const int MaxLineChars = 16 << 20;

    private static readonly byte[] NewLine = [(byte)'\n'];

    /// <summary>Writes one line per run, in order.</summary>
    public static void Write(RunSet set, Stream stream)
    {
        ArgumentNullException.ThrowIfNull(set);
        ArgumentNullException.ThrowIfNull(stream);
        foreach (var run in set.Runs)
        {
            using (var w = new Utf8JsonWriter(stream, JsonConventions.Writer(indented: false)))
            {
                JsonSerializer.Serialize(w, RunLineDto.From(run, Schema, set), JsonConventions.Options);
            }

            stream.Write(NewLine);
        }
    }

    /// <summary>
    /// Reads the lines of one or more files, in the order given. Blank lines are skipped. A line that is not a run
    /// result comes back as an error naming file and line.
    /// </summary>
    /// <param name="paths">The files, in order.</param>
    /// <param name="uniqueRuns">
    /// Refuse a run line that repeats an earlier one, or a second run at the same parameter value, naming both places
    /// (code <c>duplicate-run</c>); <c>nffit combine</c> asks for this (docs/data-safety.md, clause 8).
    /// </param>
    public static Loaded<RunSet> Read(IReadOnlyList<string> paths, bool uniqueRuns = false)
    {
        ArgumentNullException.ThrowIfNull(paths);
        var runs = new List<RunResult>();
        var byContent = new Dictionary<string, string>(StringComparer.Ordinal);
        var byParam = new Dictionary<double, string>();
        string? units = null, timeUnit = null, paramName = null;
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
                using var reader = new StreamReader(path, Encoding.UTF8, detectEncodingFromByteOrderMarks: false);
                while (ReadBoundedLine(reader) is { } line)
                {
                    lineNumber++;
                    if (line.Length > MaxLineChars)
                    {
                        return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"the line is longer than {MaxLineChars / (1 << 20)} Mi characters, far longer than any run result"));
                    }

                    if (string.IsNullOrWhiteSpace(line))
                    {
                        continue;
                    }

                    if (ReadLine(line, out var lineUnits, out var lineTime, out var lineName) is not { } run)
                    {
                        return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"the line is not a run result of layout '{Schema}' or '{SchemaV1}'"));
                    }

                    var place = $"{path}:{lineNumber}";
                    if (!uniqueRuns)
                    {
                        runs.Add(run);
                        units ??= lineUnits;
                        timeUnit ??= lineTime;
                        paramName ??= lineName;
                        continue;
                    }

                    if (byContent.TryGetValue(line.Trim(), out var same))
                    {
                        return Loaded.Fail<RunSet>(Duplicate(path, lineNumber, $"the same run result as {same}: a file given twice, or lines copied"));
                    }

                    if (byParam.TryGetValue(run.Param, out var sameParam))
                    {
                        return Loaded.Fail<RunSet>(Duplicate(path, lineNumber,
                            string.Create(CultureInfo.InvariantCulture, $"a second run at param {run.Param:R} (the first is {sameParam}): a file given twice, or parts of a manifest that overlap")));
                    }

                    byContent[line.Trim()] = place;
                    byParam[run.Param] = place;
                    runs.Add(run);
                    units ??= lineUnits;
                    timeUnit ??= lineTime;
                    paramName ??= lineName;
                }
            }
            catch (JsonException e)
            {
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"the line is not a run result: {Explain(e)}"));
            }
            catch (FormatException e)
            {
                // Our own readers' messages (e.g. an unknown smoother name); .NET's JSON messages are not shown.
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, $"a value is malformed ({e.Message})"));
            }
            catch (Exception e) when (e is InvalidOperationException or ArgumentException)
            {
                return Loaded.Fail<RunSet>(BadLine(path, lineNumber, "a value is malformed"));
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

        return new Loaded<RunSet>(new RunSet(runs, units) { TimeUnit = timeUnit, ParamName = paramName }, []);
    }

    /// <summary>The run of one line, by its layout; null when the line is not an object with a known <c>schema</c>.</summary>
    private static RunResult? ReadLine(string line, out string? units, out string? timeUnit, out string? paramName)
    {
        timeUnit = null;
        paramName = null;
        using var doc = JsonDocument.Parse(line);
        var root = doc.RootElement;
        units = null;
        var schema = root.ValueKind == JsonValueKind.Object && root.TryGetProperty("schema", out var s) && s.ValueKind == JsonValueKind.String
            ? s.GetString()
            : null;
        switch (schema)
        {
            case Schema:
                var current = root.Deserialize<RunLineDto>(JsonConventions.Options)!;
                units = current.ParamUnits;
                timeUnit = current.TimeUnit;
                paramName = current.ParamName;
                return current.ToRunResult();
            case SchemaV1:
                var earlier = root.Deserialize<RunLineV1Dto>(JsonConventions.Options)!;
                units = earlier.ParamUnits;
                return earlier.ToRunResult();
            default:
                return null;
        }
    }

    /// <summary>
    /// The next line (without its end), read at most <see cref="MaxLineChars"/> + 1 characters far, so that a file
    /// without line ends cannot take unbounded memory; null at the end.
    /// </summary>
    private static string? ReadBoundedLine(StreamReader reader)
    {
        var sb = new StringBuilder();
        int c;
        while ((c = reader.Read()) >= 0)
        {
            if (c == '\n')
            {
                return sb.Length > 0 && sb[^1] == '\r' ? sb.ToString(0, sb.Length - 1) : sb.ToString();
            }

            if (sb.Length > MaxLineChars)
            {
                return sb.ToString();
            }

            sb.Append((char)c);
        }

        return sb.Length > 0 ? sb.ToString() : null;
    }

    /// <summary>What is wrong with a line, in our words: .NET's JSON messages (positions from 0, type names) are not shown.</summary>
    private static string Explain(JsonException e)
    {
        const string missing = "missing required properties including:";
        var at = e.Message.IndexOf(missing, StringComparison.Ordinal);
        if (at >= 0)
        {
            return $"it misses the field(s) {e.Message[(at + missing.Length)..].Trim().TrimEnd('.')}";
        }

        if (e.Path is { Length: > 1 } field)
        {
            return $"the field {field.TrimStart('$', '.')} has a value of the wrong type";
        }

        return e.BytePositionInLine is { } b
            ? string.Create(CultureInfo.InvariantCulture, $"it is not valid JSON (at character {b + 1})")
            : "it is not valid JSON";
    }

    private static Diagnostic Duplicate(string path, int line, string what) =>
        new(Severity.Error, "duplicate-run", $"{what}; each run may appear once: give each file once", path, line);

    private static Diagnostic BadLine(string path, int line, string what) =>
        new(Severity.Error, "bad-run-line", $"{what}; give files written by 'nffit analyze --runs-only', unedited", path, line);
}
