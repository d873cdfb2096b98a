using NormalFormFit.Analysis;
using NormalFormFit.Ingest;

namespace NormalFormFit.Cli;

/// <summary>
/// The one place that collects every input and output path of a command and checks them before any work
/// (docs/data-safety.md): outputs named, inputs regular UTF-8 files, no output on an input, report folders provably
/// nffit's own, run sets that can support an answer. Each method prints one message and returns the exit code to
/// stop with, or null to go on.
/// </summary>
internal static class CommandGuard
{
    /// <summary>analyze and compare: the manifest, every run file it names, and the outputs.</summary>
    public static int? ManifestCommand(string manifestPath, IReadOnlyList<PlannedOutput> outputs, TextWriter stderr)
    {
        if (EmptyOutput(outputs, stderr) is { } usage)
        {
            return usage;
        }

        if (PathGuard.CheckInput(manifestPath, "a CSV manifest with header 'file,param'") is { } bad)
        {
            return Stop(stderr, bad);
        }

        var inputs = new List<string> { manifestPath };
        var manifest = File.Exists(manifestPath) ? Manifest.Read(manifestPath).Value : null;
        var hashes = new List<(string File, double Param, string Hash, int Line)>();
        if (manifest is not null)
        {
            foreach (var entry in manifest.Entries)
            {
                var full = manifest.FullPathOf(entry);
                inputs.Add(full);
                if (PathGuard.CheckInput(full, "a run file (CSV of samples)") is { } badRun)
                {
                    var display = Path.Combine(Path.GetDirectoryName(manifestPath) ?? string.Empty, entry.File);
                    return Stop(stderr, badRun with { File = display },
                        new Diagnostic(Severity.Info, "named-by-manifest", $"run file named on line {entry.Line} of the manifest", manifestPath, entry.Line));
                }
            }
        }

        if (PathGuard.CheckOutputs(inputs, outputs) is { } clash)
        {
            return Stop(stderr, clash);
        }

        if (CheckFolders(outputs, stderr) is { } folder)
        {
            return folder;
        }

        if (manifest is null)
        {
            return null; // The analysis reads the manifest again and reports its errors.
        }

        if (RunSetSanity.Parameters([.. manifest.Entries.Select(e => e.Param)], manifestPath) is { } absurd)
        {
            return Stop(stderr, absurd);
        }

        foreach (var entry in manifest.Entries)
        {
            var full = manifest.FullPathOf(entry);
            if (File.Exists(full))
            {
                // Header-only files (runs that did not fire) are alike by nature, not one recording given twice.
                if (!HeaderOnly(full))
                {
                    hashes.Add((entry.File, entry.Param, HashOrEmpty(full), entry.Line));
                }
            }
        }

        return RunSetSanity.SameData([.. hashes.Where(h => h.Hash.Length > 0)], manifestPath) is { } same ? Stop(stderr, same) : null;
    }

    /// <summary>combine: the run-line files and the outputs.</summary>
    public static int? Combine(IReadOnlyList<string> files, IReadOnlyList<PlannedOutput> outputs, TextWriter stderr)
    {
        if (EmptyOutput(outputs, stderr) is { } usage)
        {
            return usage;
        }

        foreach (var f in files)
        {
            if (PathGuard.CheckInput(f, "a run-lines file written by 'nffit analyze --runs-only'") is { } bad)
            {
                return Stop(stderr, bad);
            }
        }

        var real = files.Select(PathGuard.RealPath).ToList();
        for (var i = 0; i < real.Count; i++)
        {
            var j = real.IndexOf(real[i]);
            if (j < i)
            {
                return Stop(stderr, new Diagnostic(Severity.Error, "duplicate-run",
                    $"this file is given twice (as argument {j + 1} and {i + 1}); each run may appear once: give each file once", files[i]));
            }
        }

        return PathGuard.CheckOutputs(files, outputs) is { } clash ? Stop(stderr, clash) : CheckFolders(outputs, stderr);
    }

    /// <summary>Prints the diagnostics; exit code 3 for a run set that cannot answer, else 2.</summary>
    public static int Stop(TextWriter stderr, params Diagnostic[] diagnostics)
    {
        foreach (var d in diagnostics)
        {
            stderr.WriteLine($"nffit: {d}");
        }

        return diagnostics.Any(d => RunSetSanity.Codes.Contains(d.Code)) ? ExitCodes.CannotAnswer : ExitCodes.BadInput;
    }

    /// <summary>A usage error when a column option is a position below 1 or empty.</summary>
    public static int? ColumnOptions(TextWriter stderr, params (string Option, string? Value)[] columns)
    {
        foreach (var (option, value) in columns)
        {
            if (value is null)
            {
                continue;
            }

            if (string.IsNullOrWhiteSpace(value))
            {
                stderr.WriteLine($"nffit: usage: {option} needs a header name or a 1-based column position");
                return ExitCodes.BadInput;
            }

            if (long.TryParse(value, System.Globalization.NumberStyles.AllowLeadingSign, System.Globalization.CultureInfo.InvariantCulture, out var n) && n < 1)
            {
                stderr.WriteLine($"nffit: usage: {option} {value}: column positions start at 1 (the first column); give 1 or more, or the header name");
                return ExitCodes.BadInput;
            }
        }

        return null;
    }

    /// <summary>A usage error when an output option was given an empty name.</summary>
    public static int? EmptyOutput(IEnumerable<PlannedOutput> outputs, TextWriter stderr)
    {
        foreach (var o in outputs)
        {
            if (string.IsNullOrWhiteSpace(o.Path) || o.Path.Contains('\0', StringComparison.Ordinal))
            {
                stderr.WriteLine(o.Folder
                    ? $"nffit: usage: {o.Option} needs a folder name; give e.g. {o.Option} report"
                    : $"nffit: usage: {o.Option} needs a file name, or '-' for standard output");
                return ExitCodes.BadInput;
            }
        }

        return null;
    }

    private static int? CheckFolders(IEnumerable<PlannedOutput> outputs, TextWriter stderr)
    {
        foreach (var o in outputs.Where(o => o.Folder && o.Option == "--out"))
        {
            if (ReportFolder.Check(o.Path) is { } why)
            {
                return Stop(stderr, why);
            }
        }

        foreach (var o in outputs.Where(o => !o.Folder && o.Path != "-"))
        {
            if (Directory.Exists(o.Path))
            {
                return Stop(stderr, new Diagnostic(Severity.Error, "not-a-file", $"{o.Option}: this is a folder; give a file name", o.Path));
            }

            var parent = Path.GetDirectoryName(Path.GetFullPath(o.Path));
            if (parent is null || !Directory.Exists(parent))
            {
                return Stop(stderr, new Diagnostic(Severity.Error, "no-parent-folder", $"{o.Option}: the folder '{parent}' does not exist; create it first", o.Path));
            }
        }

        return null;
    }

    /// <summary>A small file with at most one line that is not blank or a # comment: a header and no data.</summary>
    private static bool HeaderOnly(string path)
    {
        try
        {
            var info = new FileInfo(path);
            if (info.Length > 4096)
            {
                return false;
            }

            return File.ReadLines(path).Count(l => l.Trim().Length > 0 && !l.TrimStart().StartsWith('#')) <= 1;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return false; // The reader reports it.
        }
    }

    private static string HashOrEmpty(string path)
    {
        try
        {
            return OwnedFolder.Hash(path);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return string.Empty; // The reader reports it.
        }
    }
}
