using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>How to read a run file.</summary>
public sealed record RunReadOptions
{
    /// <summary>Time column: a header name, or a 1-based position written as a number.</summary>
    public string TimeColumn { get; init; } = "t";

    /// <summary>Phase column: a header name, or a 1-based position written as a number.</summary>
    public string PhaseColumn { get; init; } = "theta";

    /// <summary>Unit of the phase column.</summary>
    public PhaseUnit PhaseUnit { get; init; } = PhaseUnit.Radians;

    /// <summary>Field separator; detected from the header by default.</summary>
    public Delimiter Delimiter { get; init; } = Delimiter.Auto;

    /// <summary>Numbers use a decimal comma (then the separator must not be a comma).</summary>
    public bool DecimalComma { get; init; }

    /// <summary>Default options: columns <c>t</c> and <c>theta</c>, radians.</summary>
    public static RunReadOptions Default { get; } = new();
}

/// <summary>A phase recording as read: time and phase in radians (not yet unwrapped), split at gaps.</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="Phase">Phase in radians, as recorded (wrapped or not).</param>
/// <param name="SegmentStarts">Index of the first sample of each segment; gaps (missing values) separate segments.</param>
public sealed record PhaseRecording(string File, double[] Time, double[] Phase, int[] SegmentStarts);

/// <summary>Reads phase-versus-time run files.</summary>
public static class RunReader
{
    /// <summary>
    /// Reads <paramref name="path"/>. Errors (missing file, no data, text where a number should be, time
    /// not increasing, too few fields) come back as diagnostics naming file, line and column; the reader
    /// never throws for bad content.
    /// </summary>
    public static Loaded<PhaseRecording> Read(string path, RunReadOptions? options = null, string? displayName = null)
    {
        ArgumentNullException.ThrowIfNull(path);
        options ??= RunReadOptions.Default;
        var name = displayName ?? path;
        if (!System.IO.File.Exists(path))
        {
            return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "missing-file",
                "the file does not exist; check the path (paths in a manifest are relative to the manifest)", name));
        }

        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16);
            return Read(stream, name, options);
        }
        catch (IOException e)
        {
            return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "unreadable", $"cannot read the file: {e.Message}", name));
        }
        catch (UnauthorizedAccessException e)
        {
            return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "unreadable", $"cannot read the file: {e.Message}", name));
        }
    }

    /// <summary>Reads a run from a stream; <paramref name="name"/> is used in messages.</summary>
    public static Loaded<PhaseRecording> Read(Stream stream, string name, RunReadOptions options)
    {
        ArgumentNullException.ThrowIfNull(stream);
        ArgumentNullException.ThrowIfNull(options);
        using var reader = new DelimitedTextReader(stream, options.Delimiter);
        if (!reader.Read())
        {
            return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "empty-file",
                "the file holds no data (only blank or # comment lines); expected a header such as 't,theta' and one sample per line", name));
        }

        if (reader.LineLooksBinary())
        {
            return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "binary-file",
                "the file is not text (it holds control bytes or invalid UTF-8); expected a CSV text file of time and phase", name, reader.LineNumber));
        }

        var diagnostics = new List<Diagnostic>();
        var header = Enumerable.Range(0, reader.FieldCount).Select(reader.FieldText).ToArray();
        var headerIsData = header.All(h => DelimitedTextReader.TryParseNumber(System.Text.Encoding.UTF8.GetBytes(h), options.DecimalComma, out _));
        int tCol, pCol;
        if (headerIsData)
        {
            if (!TryPosition(options.TimeColumn, out tCol))
            {
                tCol = 0;
            }

            if (!TryPosition(options.PhaseColumn, out pCol))
            {
                pCol = 1;
            }

            diagnostics.Add(new Diagnostic(Severity.Info, "no-header",
                $"no header line; reading column {tCol + 1} as time and column {pCol + 1} as phase", name, reader.LineNumber));
        }
        else
        {
            var t = Resolve(options.TimeColumn, header);
            var p = Resolve(options.PhaseColumn, header);
            if (t < 0 || p < 0)
            {
                var missing = t < 0 ? options.TimeColumn : options.PhaseColumn;
                return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "missing-column",
                    $"no column '{missing}' in the header (found: {string.Join(", ", header)}); name the columns with --time-column/--phase-column or by position (1, 2, …)",
                    name, reader.LineNumber, 1));
            }

            (tCol, pCol) = (t, p);
        }

        var needed = Math.Max(tCol, pCol) + 1;
        var scale = options.PhaseUnit switch
        {
            PhaseUnit.Degrees => Math.PI / 180.0,
            PhaseUnit.Turns => 2.0 * Math.PI,
            _ => 1.0,
        };
        var time = new GrowableArray(1024);
        var phase = new GrowableArray(1024);
        var segments = new List<int> { 0 };
        var gapPending = false;
        var lastTime = double.NegativeInfinity;
        var lastTimeLine = 0;
        var first = true;
        do
        {
            if (first)
            {
                first = false;
                if (!headerIsData)
                {
                    continue;
                }
            }

            if (reader.FieldCount < needed)
            {
                if (reader.LineLooksBinary())
                {
                    return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "binary-file",
                        "the file is not text (control bytes or invalid UTF-8); expected a CSV text file of time and phase", name, reader.LineNumber));
                }

                return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "too-few-fields",
                    $"found {reader.FieldCount} field(s), expected at least {needed}; every line needs a time and a phase value",
                    name, reader.LineNumber, 1));
            }

            var tf = reader.Field(tCol);
            var pf = reader.Field(pCol);
            if (DelimitedTextReader.IsMissing(tf) || DelimitedTextReader.IsMissing(pf))
            {
                gapPending = time.Count > 0;
                continue;
            }

            if (!DelimitedTextReader.TryParseNumber(tf, options.DecimalComma, out var tv) || !double.IsFinite(tv))
            {
                return Loaded.Fail<PhaseRecording>(BadNumber(reader, tCol, name, "time", options.DecimalComma));
            }

            if (!DelimitedTextReader.TryParseNumber(pf, options.DecimalComma, out var pv) || !double.IsFinite(pv))
            {
                return Loaded.Fail<PhaseRecording>(BadNumber(reader, pCol, name, "phase", options.DecimalComma));
            }

            if (tv <= lastTime)
            {
                var what = tv == lastTime ? "repeats" : "goes backwards";
                return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "time-not-increasing",
                    string.Create(CultureInfo.InvariantCulture,
                        $"time {what} ({tv:R} after {lastTime:R} on line {lastTimeLine}); samples must be in strictly increasing time: sort the file or remove duplicate rows"),
                    name, reader.LineNumber, reader.ColumnOf(tCol)));
            }

            if (gapPending)
            {
                segments.Add(time.Count);
                gapPending = false;
            }

            lastTime = tv;
            lastTimeLine = reader.LineNumber;
            time.Add(tv);
            phase.Add(pv * scale);
        }
        while (reader.Read());

        if (time.Count == 0)
        {
            return Loaded.Fail<PhaseRecording>(new Diagnostic(Severity.Error, "no-data",
                "the file has a header but no data lines; expected one line per sample (time, phase)", name, reader.LineNumber));
        }

        return new Loaded<PhaseRecording>(
            new PhaseRecording(name, time.ToArray(), phase.ToArray(), [.. segments]), diagnostics);
    }

    private static Diagnostic BadNumber(DelimitedTextReader reader, int col, string name, string what, bool decimalComma)
    {
        var text = reader.FieldText(col);
        if (text.Length > 40)
        {
            text = text[..40] + "…";
        }

        var hint = !decimalComma && text.Contains(',', StringComparison.Ordinal)
            ? "; if the file uses a decimal comma, pass --decimal-comma"
            : string.Empty;
        return new Diagnostic(Severity.Error, "not-a-number",
            $"expected a number for the {what} in column {col + 1}, found '{text}'{hint}",
            name, reader.LineNumber, reader.ColumnOf(col));
    }

    private static bool TryPosition(string spec, out int index)
    {
        if (int.TryParse(spec, NumberStyles.None, CultureInfo.InvariantCulture, out var k) && k >= 1)
        {
            index = k - 1;
            return true;
        }

        index = -1;
        return false;
    }

    private static int Resolve(string spec, string[] header)
    {
        if (TryPosition(spec, out var k))
        {
            return k < header.Length ? k : -1;
        }

        return Array.FindIndex(header, h => string.Equals(h, spec, StringComparison.OrdinalIgnoreCase));
    }
}

/// <summary>
/// A list of doubles stored in fixed-size chunks: growing never copies, and <see cref="ToArray"/> needs only the
/// final array besides the chunks (peak 2n doubles instead of 3n with doubling).
/// </summary>
internal sealed class GrowableArray(int capacity)
{
    private const int ChunkLength = 1 << 16;
    private readonly List<double[]> _chunks = [];
    private double[] _current = new double[Math.Clamp(capacity, 4, ChunkLength)];
    private int _used;
    private int _full;

    public int Count => _full + _used;

    public void Add(double v)
    {
        if (_used == _current.Length)
        {
            _chunks.Add(_current);
            _full += _used;
            _current = new double[ChunkLength];
            _used = 0;
        }

        _current[_used++] = v;
    }

    public double[] ToArray()
    {
        var result = new double[Count];
        var at = 0;
        foreach (var c in _chunks)
        {
            c.CopyTo(result, at);
            at += c.Length;
        }

        _current.AsSpan(0, _used).CopyTo(result.AsSpan(at));
        return result;
    }
}
