using System.Globalization;
using System.Text;
using NormalFormFit.Ingest;

namespace NormalFormFit.Simulation;

/// <summary>
/// Writes runs and manifests as CSV (invariant culture, UTF-8 without BOM, '\n' line ends), each file whole or not
/// at all: the text goes to a temporary file in the target folder, which is then renamed over the target.
/// </summary>
/// <remarks>
/// Numbers use the "R" format, which in .NET Core 3.0 and later is the shortest text that parses back to the same
/// double: nothing is lost (unlike G10) and nothing is padded (unlike G17, which writes 0.01 as
/// 0.01000000000000000021). Fields with commas or quotes (or blanks at an end, or a leading #) are
/// quoted as in RFC 4180; line breaks are refused (the reader reads one row per line).
/// </remarks>
public static class RunWriter
{
    private static readonly UTF8Encoding Utf8NoBom = new(encoderShouldEmitUTF8Identifier: false);

    /// <summary>Writes the recorded run as CSV with header <c>t,theta</c> (time, recorded phase in radians).</summary>
    /// <param name="path">Target file; its folder must exist. An existing file is replaced.</param>
    /// <param name="run">The run.</param>
    /// <exception cref="ArgumentException">Time and Phase differ in length.</exception>
    /// <exception cref="IOException">The file could not be written; the target is then unchanged.</exception>
    public static void WriteRun(string path, SimulatedRun run)
    {
        ArgumentNullException.ThrowIfNull(run);
        WriteColumns(path, run.Time, run.Phase);
    }

    /// <summary>Writes two equal-length columns as CSV with header <c>t,theta</c>.</summary>
    /// <param name="path">Target file; its folder must exist. An existing file is replaced.</param>
    /// <param name="time">Sample times.</param>
    /// <param name="theta">Phase in radians.</param>
    /// <exception cref="ArgumentException">The columns differ in length.</exception>
    public static void WriteColumns(string path, IReadOnlyList<double> time, IReadOnlyList<double> theta)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(theta);
        if (time.Count != theta.Count)
        {
            throw new ArgumentException(
                string.Create(CultureInfo.InvariantCulture, $"time has {time.Count} values but theta has {theta.Count}."),
                nameof(theta));
        }

        WriteAtomically(path, writer =>
        {
            Span<char> buffer = stackalloc char[32];
            writer.Write("t,theta\n");
            for (var i = 0; i < time.Count; i++)
            {
                WriteNumber(writer, time[i], buffer);
                writer.Write(',');
                WriteNumber(writer, theta[i], buffer);
                writer.Write('\n');
            }
        });
    }

    /// <summary>
    /// Writes a manifest with header <c>file,param</c>, plus a <c>label</c> column when any entry has a label and a
    /// <c>units</c> column when any has units: the layout <see cref="Manifest.Read(string)"/> reads back.
    /// </summary>
    /// <param name="path">Target file; its folder must exist. An existing file is replaced.</param>
    /// <param name="entries">The rows, in order (their <see cref="ManifestEntry.Line"/> is not written).</param>
    /// <exception cref="ArgumentException">A file name is empty, or a field holds a line break.</exception>
    public static void WriteManifest(string path, IReadOnlyList<ManifestEntry> entries)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(path);
        ArgumentNullException.ThrowIfNull(entries);
        var withLabel = false;
        var withUnits = false;
        foreach (var entry in entries)
        {
            ArgumentNullException.ThrowIfNull(entry, nameof(entries));
            ArgumentException.ThrowIfNullOrWhiteSpace(entry.File, nameof(entries));
            withLabel |= entry.Label is not null;
            withUnits |= entry.Units is not null;
            if ($"{entry.File}{entry.Label}{entry.Units}".AsSpan().IndexOfAny('\r', '\n') >= 0)
            {
                throw new ArgumentException("A manifest field cannot hold a line break (the manifest reader reads one row per line).", nameof(entries));
            }
        }

        WriteAtomically(path, writer =>
        {
            Span<char> buffer = stackalloc char[32];
            writer.Write("file,param");
            writer.Write(withLabel ? ",label" : string.Empty);
            writer.Write(withUnits ? ",units\n" : "\n");
            foreach (var entry in entries)
            {
                writer.Write(Quote(entry.File));
                writer.Write(',');
                WriteNumber(writer, entry.Param, buffer);
                if (withLabel)
                {
                    writer.Write(',');
                    writer.Write(Quote(entry.Label ?? string.Empty));
                }

                if (withUnits)
                {
                    writer.Write(',');
                    writer.Write(Quote(entry.Units ?? string.Empty));
                }

                writer.Write('\n');
            }
        });
    }

    /// <summary>
    /// Runs <paramref name="write"/> against a temporary file beside <paramref name="path"/> and renames it over
    /// the target only when it returns; on any exception the temporary file is deleted and the target untouched.
    /// </summary>
    internal static void WriteAtomically(string path, Action<TextWriter> write)
    {
        var full = Path.GetFullPath(path);
        var folder = Path.GetDirectoryName(full) ?? throw new ArgumentException($"'{path}' has no folder.", nameof(path));
        var temp = Path.Combine(folder, $".{Path.GetFileName(full)}.{Guid.NewGuid():N}.tmp");
        try
        {
            using (var stream = new FileStream(temp, FileMode.CreateNew, FileAccess.Write, FileShare.None, 1 << 16))
            using (var writer = new StreamWriter(stream, Utf8NoBom, 1 << 16))
            {
                write(writer);
                writer.Flush();
                stream.Flush(flushToDisk: true);
            }

            File.Move(temp, full, overwrite: true);
        }
        catch
        {
            TryDelete(temp);
            throw;
        }
    }

    private static void TryDelete(string file)
    {
        try
        {
            File.Delete(file);
        }
        catch (IOException)
        {
            // The original exception matters more; a stray temporary file is named so that it is recognisable.
        }
        catch (UnauthorizedAccessException)
        {
        }
    }

    private static void WriteNumber(TextWriter writer, double value, Span<char> buffer)
    {
        if (!value.TryFormat(buffer, out var written, "R", CultureInfo.InvariantCulture))
        {
            writer.Write(value.ToString("R", CultureInfo.InvariantCulture));
            return;
        }

        writer.Write(buffer[..written]);
    }

    // Quoted when the reader would otherwise misread it: separators or quotes inside, blanks at either end (trimmed),
    // a leading '#' (a comment line when in the first field).
    private static string Quote(string field) =>
        field.AsSpan().IndexOfAny(",\"") < 0 && field.Trim() == field && !field.StartsWith('#')
            ? field
            : "\"" + field.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
}
