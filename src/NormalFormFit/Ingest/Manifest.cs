using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>
/// One row of a manifest: a run file and the control-parameter value it was recorded at. <see cref="Manifest.Read(string)"/>
/// reads rows; <see cref="Simulation.RunWriter.WriteManifest"/> writes them.
/// </summary>
/// <param name="File">Path of the run file as written in the manifest, relative to the manifest's folder.</param>
/// <param name="Param">Control-parameter value μ.</param>
/// <param name="Label">Optional label.</param>
/// <param name="Units">Optional units of the parameter.</param>
public sealed record ManifestEntry(string File, double Param, string? Label = null, string? Units = null)
{
    /// <summary>Line of the manifest that named the run; 0 for a row not read from a file.</summary>
    public int Line { get; init; }
}

/// <summary>A manifest: CSV with header <c>file,param</c> (optional <c>label</c>, <c>units</c>).</summary>
/// <param name="Path">The manifest's own path.</param>
/// <param name="Entries">Its rows in file order.</param>
public sealed record Manifest(string Path, IReadOnlyList<ManifestEntry> Entries)
{
    /// <summary>Name of the parameter as the header gives it (<c>voltage</c> for <c>voltage_V</c>); null for <c>param</c>.</summary>
    public string? ParamName { get; init; }

    /// <summary>Unit of the parameter written in its column name (<c>V</c> for <c>voltage_V</c>); null when none.</summary>
    public string? ParamUnit { get; init; }

    /// <summary>The full path of <paramref name="entry"/>'s run file: its path resolved against the manifest's folder.</summary>
    public string FullPathOf(ManifestEntry entry)
    {
        ArgumentNullException.ThrowIfNull(entry);
        var folder = System.IO.Path.GetDirectoryName(System.IO.Path.GetFullPath(Path)) ?? ".";
        return System.IO.Path.GetFullPath(System.IO.Path.Combine(folder, entry.File));
    }

    /// <summary>Reads and checks a manifest; problems come back as diagnostics.</summary>
    public static Loaded<Manifest> Read(string path) => Read(path, null);

    /// <summary>Reads and checks a manifest whose parameter column is <paramref name="paramColumn"/> (a header name or a 1-based position; null: recognised).</summary>
    public static Loaded<Manifest> Read(string path, string? paramColumn)
    {
        ArgumentNullException.ThrowIfNull(path);
        if (!System.IO.File.Exists(path))
        {
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "missing-file",
                "the manifest does not exist; give the path of a CSV file with header 'file,param'", path));
        }

        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read);
            return Read(stream, path, paramColumn);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "unreadable", $"cannot read the manifest: {e.Message}", path));
        }
    }

    private static Loaded<Manifest> Read(Stream stream, string path, string? paramColumn)
    {
        using var reader = new DelimitedTextReader(stream, Delimiter.Auto);
        const string expected = "a CSV file with header 'file,param' and one line per run";
        if (!reader.Read())
        {
            if (reader.TooLong is not null)
            {
                return Loaded.Fail<Manifest>(reader.TooLongError(path, expected));
            }

            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "empty-file",
                "the manifest is empty; expected a header 'file,param' and one line per run", path));
        }

        if (reader.LineLooksBinary())
        {
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "binary-file",
                "the manifest is not text; expected a CSV file with header 'file,param'", path, reader.LineNumber));
        }

        var header = Enumerable.Range(0, reader.FieldCount).Select(reader.FieldText).ToArray();
        int Col(params string[] names) => Array.FindIndex(header, h => names.Any(n => string.Equals(h.Trim(), n, StringComparison.OrdinalIgnoreCase)));
        var fileCol = Col("file", "filename", "file name");
        var labelCol = Col("label");
        var unitsCol = Col("units", "unit");
        var (paramCol, paramError) = ParameterColumn(header, fileCol, labelCol, unitsCol, paramColumn);
        if (fileCol < 0 || paramCol < 0)
        {
            var why = fileCol < 0
                ? $"expected a header with a column 'file' (the run files) and a column of parameter values such as 'param' or 'voltage_V', found '{string.Join(",", header)}'"
                : paramError!;
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "bad-header", why, path, reader.LineNumber, 1));
        }

        var (paramName, paramUnit) = ColumnNames.SplitParameterName(header[paramCol]);
        var entries = new List<ManifestEntry>();
        var seen = new Dictionary<double, int>();
        while (reader.Read())
        {
            var needed = Math.Max(fileCol, paramCol) + 1;
            if (reader.FieldCount < needed)
            {
                return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "too-few-fields",
                    $"found {reader.FieldCount} field(s), expected {header.Length} ({string.Join(",", header)})", path, reader.LineNumber, 1));
            }

            if (reader.FieldCount > header.Length)
            {
                // A decimal comma in a comma-separated manifest ("run.csv,1,01") splits the number in two: never guess.
                var hint = reader.Delimiter == Delimiter.Comma
                    ? $"; a number written with a decimal comma splits into two fields ('{reader.FieldText(paramCol)},{reader.FieldText(paramCol + 1 < reader.FieldCount ? paramCol + 1 : paramCol)}'?): write it with a decimal point, or quote the field"
                    : "; remove the extra fields or add their names to the header";
                return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "too-many-fields",
                    $"found {reader.FieldCount} fields, but the header has {header.Length} ({string.Join(",", header)}){hint}",
                    path, reader.LineNumber, reader.ColumnOf(header.Length)));
            }

            var file = reader.FieldText(fileCol);
            if (file.Length == 0)
            {
                return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "missing-value",
                    "the file name is empty; each line names a run file", path, reader.LineNumber, reader.ColumnOf(fileCol)));
            }

            if (!DelimitedTextReader.TryParseNumber(reader.Field(paramCol), false, out var param) || !double.IsFinite(param))
            {
                return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "not-a-number",
                    $"expected a number for {header[paramCol]}, found '{reader.FieldText(paramCol)}' (use a decimal point)", path, reader.LineNumber, reader.ColumnOf(paramCol)));
            }

            if (seen.TryGetValue(param, out var other))
            {
                return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "duplicate-param",
                    string.Create(CultureInfo.InvariantCulture, $"param {param:R} already appears on line {other}; each run needs its own parameter value (merge or drop one of them)"),
                    path, reader.LineNumber, reader.ColumnOf(paramCol)));
            }

            seen[param] = reader.LineNumber;
            string? Opt(int c) => c >= 0 && c < reader.FieldCount && reader.Field(c).Length > 0 ? reader.FieldText(c) : null;
            entries.Add(new ManifestEntry(file, param, Opt(labelCol), Opt(unitsCol) ?? paramUnit) { Line = reader.LineNumber });
        }

        if (reader.TooLong is not null)
        {
            return Loaded.Fail<Manifest>(reader.TooLongError(path, expected));
        }

        if (entries.Count == 0)
        {
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "no-data",
                "the manifest has a header but names no runs; add one line per run: file,param", path));
        }

        var named = string.Equals(paramName, "param", StringComparison.OrdinalIgnoreCase) || paramName.Length == 0 ? null : paramName;
        return new Loaded<Manifest>(new Manifest(path, entries) { ParamName = named, ParamUnit = paramUnit }, []);
    }

    /// <summary>Header names a manifest may have besides the file and the parameter: never taken as the parameter.</summary>
    public static IReadOnlyList<string> OtherColumns { get; } = ["label", "units", "unit", "note", "notes", "comment", "comments", "description"];

    /// <summary>
    /// The parameter column: the one named by <paramref name="requested"/> (name or 1-based position), else a column
    /// named <c>param</c>, else the only column that is not the file, a label, units or a note. Returns −1 and the
    /// message when there is none or more than one.
    /// </summary>
    private static (int Column, string? Error) ParameterColumn(string[] header, int fileCol, int labelCol, int unitsCol, string? requested)
    {
        var found = string.Join(",", header);
        if (requested is not null)
        {
            var k = int.TryParse(requested, NumberStyles.None, CultureInfo.InvariantCulture, out var pos) && pos >= 1 && pos <= header.Length
                ? pos - 1
                : Array.FindIndex(header, h => string.Equals(h.Trim(), requested.Trim(), StringComparison.OrdinalIgnoreCase));
            return k >= 0 ? (k, null) : (-1, $"no parameter column '{requested}' (--param-column) in the header '{found}'; give a header name or a 1-based position");
        }

        var named = Array.FindIndex(header, h => string.Equals(h.Trim(), "param", StringComparison.OrdinalIgnoreCase));
        if (named >= 0)
        {
            return (named, null);
        }

        var candidates = Enumerable.Range(0, header.Length)
            .Where(i => i != fileCol && i != labelCol && i != unitsCol && !OtherColumns.Contains(header[i].Trim(), StringComparer.OrdinalIgnoreCase))
            .ToList();
        return candidates.Count switch
        {
            1 => (candidates[0], null),
            0 => (-1, $"expected a header with a column 'file' and a column of parameter values (such as 'param', 'voltage_V' or 'I_app [pA]'), found '{found}'"),
            _ => (-1, $"more than one column could hold the parameter values ({string.Join(", ", candidates.Select(i => "'" + header[i] + "'"))}); choose one with --param-column NAME"),
        };
    }
}
