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
    /// <summary>The full path of <paramref name="entry"/>'s run file: its path resolved against the manifest's folder.</summary>
    public string FullPathOf(ManifestEntry entry)
    {
        ArgumentNullException.ThrowIfNull(entry);
        var folder = System.IO.Path.GetDirectoryName(System.IO.Path.GetFullPath(Path)) ?? ".";
        return System.IO.Path.GetFullPath(System.IO.Path.Combine(folder, entry.File));
    }

    /// <summary>Reads and checks a manifest; problems come back as diagnostics.</summary>
    public static Loaded<Manifest> Read(string path)
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
            return Read(stream, path);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "unreadable", $"cannot read the manifest: {e.Message}", path));
        }
    }

    private static Loaded<Manifest> Read(Stream stream, string path)
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
        int Col(string n) => Array.FindIndex(header, h => string.Equals(h, n, StringComparison.OrdinalIgnoreCase));
        var fileCol = Col("file");
        var paramCol = Col("param");
        if (fileCol < 0 || paramCol < 0)
        {
            return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "bad-header",
                $"expected a header with columns 'file' and 'param', found '{string.Join(",", header)}'", path, reader.LineNumber, 1));
        }

        var labelCol = Col("label");
        var unitsCol = Col("units");
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
                    $"expected a number for param, found '{reader.FieldText(paramCol)}' (use a decimal point)", path, reader.LineNumber, reader.ColumnOf(paramCol)));
            }

            if (seen.TryGetValue(param, out var other))
            {
                return Loaded.Fail<Manifest>(new Diagnostic(Severity.Error, "duplicate-param",
                    string.Create(CultureInfo.InvariantCulture, $"param {param:R} already appears on line {other}; each run needs its own parameter value (merge or drop one of them)"),
                    path, reader.LineNumber, reader.ColumnOf(paramCol)));
            }

            seen[param] = reader.LineNumber;
            string? Opt(int c) => c >= 0 && c < reader.FieldCount && reader.Field(c).Length > 0 ? reader.FieldText(c) : null;
            entries.Add(new ManifestEntry(file, param, Opt(labelCol), Opt(unitsCol)) { Line = reader.LineNumber });
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

        return new Loaded<Manifest>(new Manifest(path, entries), []);
    }
}
