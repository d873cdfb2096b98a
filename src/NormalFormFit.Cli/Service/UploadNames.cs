using System.Globalization;

namespace NormalFormFit.Cli.Service;

/// <summary>
/// The rule for names of uploaded files: a plain name of one folder entry that every common file system stores as
/// it is, so that nothing can be written outside the job's folder nor collide with the service's own files.
/// </summary>
internal static class UploadNames
{
    /// <summary>Longest name kept (bytes of UTF-16 code units; file systems commonly allow 255).</summary>
    public const int MaxLength = 200;

    /// <summary>The name by which an upload's manifest is recognised.</summary>
    public const string Manifest = "manifest.csv";

    // Names Windows reserves for devices, with or without an extension (Microsoft's "Naming Files, Paths, and
    // Namespaces"); refused everywhere so that a job folder can be copied to any machine.
    private static readonly HashSet<string> Reserved = new(
        new[] { "CON", "PRN", "AUX", "NUL", "CONIN$", "CONOUT$" }
            .Concat(Enumerable.Range(0, 10).SelectMany(i => new[] { "COM" + i.ToString(CultureInfo.InvariantCulture), "LPT" + i.ToString(CultureInfo.InvariantCulture) }))
            .Concat(["COM¹", "COM²", "COM³", "LPT¹", "LPT²", "LPT³"]),
        StringComparer.OrdinalIgnoreCase);

    /// <summary>Null when <paramref name="name"/> may be stored as it is; else what is wrong with it.</summary>
    public static string? Problem(string? name)
    {
        if (string.IsNullOrEmpty(name))
        {
            return "a file part has no file name";
        }

        if (name.Length > MaxLength)
        {
            return $"a file name is longer than {MaxLength} characters";
        }

        if (name.Any(c => SafeText.Escape(c) is not null || c == '\t' || char.IsSurrogate(c) && !char.IsSurrogatePair(name, name.IndexOf(c, StringComparison.Ordinal))))
        {
            return $"the file name '{SafeText.EscapeAll(name)}' holds control or invisible characters";
        }

        if (name.Contains('/', StringComparison.Ordinal) || name.Contains('\\', StringComparison.Ordinal))
        {
            return $"the file name '{name}' holds a path; give the name of the file alone";
        }

        if (name.Contains(':', StringComparison.Ordinal))
        {
            return $"the file name '{name}' holds ':' (a drive letter or stream name on Windows); rename the file";
        }

        if (name.Contains("..", StringComparison.Ordinal) || name.StartsWith('.'))
        {
            return $"the file name '{name}' starts with '.' or holds '..'; rename the file";
        }

        if (name.EndsWith(' ') || name.EndsWith('.') || name.StartsWith(' '))
        {
            return $"the file name '{name}' starts or ends with a blank or ends with '.'; rename the file";
        }

        if (name.IndexOfAny(['<', '>', '"', '|', '?', '*']) >= 0)
        {
            return $"the file name '{name}' holds one of < > \" | ? * (not allowed on Windows); rename the file";
        }

        var stem = name.Split('.')[0].TrimEnd();
        if (Reserved.Contains(stem))
        {
            return $"the file name '{name}' is a device name on Windows ({stem}); rename the file";
        }

        return null;
    }
}
