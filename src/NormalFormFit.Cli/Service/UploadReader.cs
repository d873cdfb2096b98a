using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.WebUtilities;
using Microsoft.Net.Http.Headers;

namespace NormalFormFit.Cli.Service;

/// <summary>An upload refused: the HTTP status and one message.</summary>
internal sealed class UploadRefusedException(int status, string code, string message) : Exception(message)
{
    public int Status { get; } = status;

    public string Code { get; } = code;
}

/// <summary>
/// Reads a <c>multipart/form-data</c> upload part by part (<see cref="MultipartReader"/>) straight into the job's
/// <c>input</c> folder, checking the limits while the bytes arrive: the whole body is never held in memory, and an
/// upload over a limit is refused as soon as it passes it. Each file is written to a temporary name and renamed when
/// complete. Then the manifest is taken from the upload or written from the parameter fields, and the reading
/// options are turned into analyze's options.
/// </summary>
internal sealed class UploadReader(ServiceSettings settings, IReadOnlyDictionary<string, bool> readingOptions)
{
    private const int Chunk = 64 * 1024;

    private readonly List<string> files = [];
    private readonly Dictionary<string, string> fields = new(StringComparer.Ordinal);
    private long total;

    /// <summary>Reads the body into <paramref name="input"/> (which exists and is empty); returns analyze's options.</summary>
    /// <exception cref="UploadRefusedException">The upload breaks a rule; the caller deletes the folder.</exception>
    public async Task<List<string>> ReadAsync(HttpRequest request, string input, CancellationToken token)
    {
        if (!MediaTypeHeaderValue.TryParse(request.ContentType, out var type) || !type.MediaType.Equals("multipart/form-data", StringComparison.OrdinalIgnoreCase)
            || HeaderUtilities.RemoveQuotes(type.Boundary).Value is not { Length: > 0 and <= 70 } boundary)
        {
            throw new UploadRefusedException(StatusCodes.Status415UnsupportedMediaType, "not_multipart", "send the files as multipart/form-data (form field 'files')");
        }

        if (request.ContentLength > settings.MaxUploadBytes)
        {
            throw TooLarge();
        }

        var reader = new MultipartReader(boundary, request.Body) { BodyLengthLimit = null, HeadersCountLimit = 16, HeadersLengthLimit = 16 * 1024 };
        while (await reader.ReadNextSectionAsync(token).ConfigureAwait(false) is { } section)
        {
            if (!ContentDispositionHeaderValue.TryParse(section.ContentDisposition, out var disposition) || !disposition.DispositionType.Equals("form-data", StringComparison.OrdinalIgnoreCase))
            {
                throw Bad("bad_part", "every part needs a 'Content-Disposition: form-data' header with a name");
            }

            var name = HeaderUtilities.RemoveQuotes(disposition.Name).Value ?? string.Empty;
            if (disposition.IsFileDisposition())
            {
                await SaveFileAsync(name, disposition, section.Body, input, token).ConfigureAwait(false);
            }
            else
            {
                await ReadFieldAsync(name, section.Body, token).ConfigureAwait(false);
            }
        }

        return Finish(input);
    }

    private async Task SaveFileAsync(string field, ContentDispositionHeaderValue disposition, Stream body, string input, CancellationToken token)
    {
        if (field != "files")
        {
            throw Bad("unknown_field", $"files go in the form field 'files', not '{SafeText.EscapeAll(field)}'");
        }

        var name = HeaderUtilities.RemoveQuotes(disposition.FileNameStar).Value is { Length: > 0 } star ? star : HeaderUtilities.RemoveQuotes(disposition.FileName).Value;
        if (UploadNames.Problem(name) is { } problem)
        {
            throw Bad("bad_file_name", problem);
        }

        if (files.Contains(name!, StringComparer.OrdinalIgnoreCase))
        {
            throw Bad("duplicate_file", $"the file '{name}' is given twice (names are compared ignoring case)");
        }

        files.Add(name!);
        if (files.Count > settings.MaxFiles)
        {
            throw Bad("too_many_files", $"an upload may hold at most {settings.MaxFiles} files (the manifest counts); split the runs or ask for a larger limit (--max-files)");
        }

        var target = Path.GetFullPath(Path.Combine(input, name!));
        if (!string.Equals(Path.GetDirectoryName(target), Path.GetFullPath(input), StringComparison.Ordinal))
        {
            throw Bad("bad_file_name", $"the file name '{name}' does not name a file in the upload's folder");
        }

        var temp = Path.Combine(input, $".part-{files.Count.ToString(CultureInfo.InvariantCulture)}.tmp");
        var buffer = new byte[Chunk];
        long line = 0;
        long lineNumber = 1;
        await using (var output = new FileStream(temp, FileMode.CreateNew, FileAccess.Write, FileShare.None, Chunk, useAsync: true))
        {
            int read;
            while ((read = await body.ReadAsync(buffer, token).ConfigureAwait(false)) > 0)
            {
                total += read;
                if (total > settings.MaxUploadBytes)
                {
                    throw TooLarge();
                }

                for (var i = 0; i < read; i++)
                {
                    if (buffer[i] == (byte)'\n')
                    {
                        line = 0;
                        lineNumber++;
                    }
                    else if (++line > settings.MaxLineBytes)
                    {
                        throw Bad("line_too_long", $"{name}:{lineNumber.ToString(CultureInfo.InvariantCulture)}: the line is longer than {settings.MaxLineBytes} bytes; is this a run file?");
                    }
                }

                await output.WriteAsync(buffer.AsMemory(0, read), token).ConfigureAwait(false);
            }

            await output.FlushAsync(token).ConfigureAwait(false);
            output.Flush(flushToDisk: true);
        }

        File.Move(temp, target, overwrite: false);
    }

    private async Task ReadFieldAsync(string name, Stream body, CancellationToken token)
    {
        if (!(name.StartsWith("param.", StringComparison.Ordinal) || name == "param_pattern" || readingOptions.ContainsKey(name)))
        {
            throw Bad("unknown_field", $"unknown form field '{SafeText.EscapeAll(name)}': expected 'files', 'param.FILE', 'param_pattern' or a reading option of analyze ({string.Join(", ", readingOptions.Keys)})");
        }

        if (fields.ContainsKey(name))
        {
            throw Bad("duplicate_field", $"the form field '{SafeText.EscapeAll(name)}' is given twice");
        }

        using var value = new MemoryStream();
        var buffer = new byte[4096];
        int read;
        while ((read = await body.ReadAsync(buffer, token).ConfigureAwait(false)) > 0)
        {
            total += read;
            if (total > settings.MaxUploadBytes)
            {
                throw TooLarge();
            }

            if (value.Length + read > ServiceSettings.MaxFieldBytes)
            {
                throw Bad("field_too_long", $"the form field '{SafeText.EscapeAll(name)}' is longer than {ServiceSettings.MaxFieldBytes} bytes");
            }

            value.Write(buffer, 0, read);
        }

        fields[name] = Encoding.UTF8.GetString(value.ToArray()).Trim();
    }

    /// <summary>Checks what was uploaded as a whole, writes the manifest when none came, and returns analyze's options.</summary>
    private List<string> Finish(string input)
    {
        var runs = files.Where(f => !f.Equals(UploadNames.Manifest, StringComparison.OrdinalIgnoreCase)).ToList();
        if (runs.Count == 0)
        {
            throw Bad("no_files", "the upload holds no run files (form field 'files')");
        }

        var values = fields.Where(f => f.Key.StartsWith("param.", StringComparison.Ordinal)).ToDictionary(f => f.Key["param.".Length..], f => f.Value, StringComparer.Ordinal);
        fields.TryGetValue("param_pattern", out var pattern);
        pattern = string.IsNullOrEmpty(pattern) ? null : pattern;
        var manifest = files.FirstOrDefault(f => f.Equals(UploadNames.Manifest, StringComparison.OrdinalIgnoreCase));
        if (manifest is not null)
        {
            if (values.Count > 0 || pattern is not null)
            {
                throw Bad("manifest_and_params", "give either manifest.csv or parameter values (param.FILE, param_pattern), not both");
            }

            if (manifest != UploadNames.Manifest)
            {
                File.Move(Path.Combine(input, manifest), Path.Combine(input, UploadNames.Manifest));
            }

            CheckManifest(input, runs);
        }
        else
        {
            WriteManifest(input, runs, values, pattern);
        }

        var options = new List<string>();
        foreach (var (name, value) in fields.Where(f => readingOptions.ContainsKey(f.Key)).OrderBy(f => f.Key, StringComparer.Ordinal))
        {
            if (readingOptions[name])
            {
                if (Switch(value) is not { } on)
                {
                    throw Bad("bad_option", $"{name}: expected true or false, got '{SafeText.EscapeAll(value)}'");
                }

                if (on)
                {
                    options.Add("--" + name);
                }
            }
            else if (value.Length > 0)
            {
                options.Add($"--{name}={value}");
            }
        }

        if (options.Any(o => o.Contains('\n', StringComparison.Ordinal)))
        {
            throw Bad("bad_option", "an option value holds a line break");
        }

        if (NffitApp.UsageErrors(["analyze", "manifest.csv", .. options]) is { Count: > 0 } usage)
        {
            throw Bad("bad_option", string.Join("; ", usage.Select(SafeText.EscapeAll)));
        }

        return options;
    }

    /// <summary>
    /// A manifest from the upload may name only files of the same upload: a path that leaves the job's folder (or any
    /// folder) is refused, so that no file of the server is read. A manifest that cannot be read is left for analyze,
    /// whose message the job then carries.
    /// </summary>
    private void CheckManifest(string input, List<string> runs)
    {
        fields.TryGetValue("param-column", out var paramColumn);
        var read = NormalFormFit.Ingest.Manifest.Read(Path.Combine(input, UploadNames.Manifest), string.IsNullOrEmpty(paramColumn) ? null : paramColumn);
        if (read.Value is not { } m)
        {
            return;
        }

        var folder = Path.GetFullPath(input);
        foreach (var entry in m.Entries)
        {
            var full = Path.GetFullPath(m.FullPathOf(entry));
            if (!string.Equals(Path.GetDirectoryName(full), folder, StringComparison.Ordinal) || !runs.Contains(Path.GetFileName(full), StringComparer.Ordinal))
            {
                throw Bad("manifest_outside", $"manifest.csv:{entry.Line.ToString(CultureInfo.InvariantCulture)}: '{SafeText.EscapeAll(entry.File)}' is not a file of this upload; name only files uploaded with it, without folders");
            }
        }
    }

    private static void WriteManifest(string input, List<string> runs, Dictionary<string, string> values, string? pattern)
    {
        foreach (var named in values.Keys.Where(k => !runs.Contains(k, StringComparer.Ordinal)))
        {
            throw Bad("unknown_file", $"param.{SafeText.EscapeAll(named)}: no uploaded file has that name");
        }

        Regex? regex = null;
        if (pattern is not null)
        {
            try
            {
                regex = new Regex(pattern, RegexOptions.CultureInvariant, TimeSpan.FromMilliseconds(200));
            }
            catch (ArgumentException e)
            {
                throw Bad("bad_pattern", $"param_pattern: not a regular expression ({e.Message})");
            }
        }

        var csv = new StringBuilder("file,param\n");
        foreach (var run in runs)
        {
            string? text;
            if (values.TryGetValue(run, out var given) && given.Length > 0)
            {
                text = given;
            }
            else if (regex is not null)
            {
                text = FromName(regex, run);
            }
            else
            {
                throw Bad("missing_param", $"{run}: no parameter value; give it in the field 'param.{run}', a param_pattern, or upload a manifest.csv");
            }

            if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v))
            {
                throw Bad("bad_param", $"{run}: the parameter value '{SafeText.EscapeAll(text)}' is not a number (write it with a decimal point, e.g. 6.42)");
            }

            csv.Append('"').Append(run.Replace("\"", "\"\"", StringComparison.Ordinal)).Append("\",").Append(text).Append('\n');
        }

        AtomicFile.Write(Path.Combine(input, UploadNames.Manifest), s => s.Write(Encoding.UTF8.GetBytes(csv.ToString())));
    }

    /// <summary>The parameter value a pattern takes from a file name: its first group when it has one, else the whole match.</summary>
    private static string FromName(Regex regex, string run)
    {
        try
        {
            var m = regex.Match(run);
            if (!m.Success)
            {
                throw Bad("missing_param", $"{run}: param_pattern does not match this file name, and no 'param.{run}' field is given");
            }

            return (m.Groups.Count > 1 ? m.Groups[1].Value : m.Value).Trim();
        }
        catch (RegexMatchTimeoutException)
        {
            throw Bad("bad_pattern", "param_pattern took too long to match a file name; simplify it");
        }
    }

    private static bool? Switch(string value) => value.ToUpperInvariant() switch
    {
        "TRUE" or "ON" or "1" or "YES" => true,
        "FALSE" or "OFF" or "0" or "NO" or "" => false,
        _ => null,
    };

    private UploadRefusedException TooLarge() =>
        new(StatusCodes.Status413PayloadTooLarge, "too_large", $"the upload is larger than {settings.MaxUploadBytes} bytes; split the runs or ask for a larger limit (--max-upload-mb)");

    private static UploadRefusedException Bad(string code, string message) => new(StatusCodes.Status400BadRequest, code, message);
}
