using System.Diagnostics;
using System.Globalization;
using System.Security.Cryptography;
using System.Text;

namespace NormalFormFit.Cli;

/// <summary>The file-system steps of replacing a folder, so that a test can make one of them fail.</summary>
internal interface IFolderSteps
{
    /// <summary>Renames a folder.</summary>
    void Move(string from, string to);

    /// <summary>Deletes a folder and everything in it.</summary>
    void Delete(string dir);
}

/// <summary>A folder could not be written or replaced; the message says what state it was left in.</summary>
internal sealed class FolderNotWrittenException(string message, Exception? inner = null) : IOException(message, inner);

/// <summary>
/// A folder that nffit writes whole and may later replace (docs/data-safety.md, clauses 2–6). Its marker file lists
/// every file written with its SHA-256 (FIPS 180-4, via <see cref="SHA256"/>); a folder is replaced only when every
/// entry in it is listed and unchanged. Writing goes to <c>.NAME.PID.tmp</c> beside the target, which takes the
/// target's place by rename; the earlier folder waits as <c>.NAME.PID.old</c> until the new one is in place.
/// Leftovers of killed runs are cleaned up on the next run in the same parent folder.
/// </summary>
internal static class OwnedFolder
{
    /// <summary>First line of a marker: layout and what wrote the folder.</summary>
    private const string Layout = "nffit-folder/2";

    /// <summary>The real file-system steps.</summary>
    public static IFolderSteps RealSteps { get; } = new Real();

    /// <summary>
    /// Null when <paramref name="dir"/> may be written: missing, empty, or provably the earlier output of the same
    /// <paramref name="kind"/> (<paramref name="replace"/> must then be true). Else the error naming the first stranger.
    /// </summary>
    /// <param name="dir">The folder as given.</param>
    /// <param name="marker">The marker's file name.</param>
    /// <param name="kind">What writes it ("report", "simulation").</param>
    /// <param name="option">The option that named it, for the message.</param>
    /// <param name="replace">Whether replacing an earlier output was asked for (or is the command's default).</param>
    /// <param name="howToReplace">What to tell the user when <paramref name="replace"/> is false.</param>
    public static Diagnostic? Check(string dir, string marker, string kind, string option, bool replace, string howToReplace)
    {
        var full = Full(dir);
        var parent = Path.GetDirectoryName(full);
        if (parent is null || !Directory.Exists(parent))
        {
            return Fail("no-parent-folder", $"{option}: the folder that should hold it, '{parent}', does not exist; create it first", dir);
        }

        if (File.Exists(full))
        {
            return Fail("not-a-folder", $"{option}: a file of that name exists; give the name of a new or empty folder", dir);
        }

        if (!Directory.Exists(full) || !Directory.EnumerateFileSystemEntries(full).Any())
        {
            return null;
        }

        var markerPath = Path.Combine(full, marker);
        if (!File.Exists(markerPath))
        {
            return Fail("foreign-folder", $"{option}: the folder holds files nffit did not write (e.g. '{FirstEntry(full)}'); give a new or empty folder", dir);
        }

        var listed = ReadMarker(markerPath, kind);
        if (listed is null)
        {
            return Fail("unproven-folder",
                $"{option}: the folder holds an nffit {kind} whose files are not listed with their hashes (an earlier version wrote it), so nffit cannot prove that everything in it is its own; delete the folder yourself or give another one",
                dir);
        }

        if (FirstStranger(full, marker, listed) is { } stranger)
        {
            return Fail("foreign-folder", $"{option}: the folder holds '{stranger.Name}', which {stranger.Why}; nffit replaces only a folder whose every file it wrote: move that file away or give another folder", dir);
        }

        return replace ? null : Fail("folder-not-empty", $"{option}: the folder holds an earlier {kind}; {howToReplace}", dir);
    }

    /// <summary>
    /// Writes the folder whole or not at all: <paramref name="fill"/> writes the files into a temporary folder, the
    /// marker is added, and the temporary folder takes the target's place. On failure the earlier folder is left (or
    /// put back) in place and a <see cref="FolderNotWrittenException"/> says so.
    /// </summary>
    public static void Write(string dir, string marker, string kind, Action<string> fill, IFolderSteps? steps = null)
    {
        ArgumentNullException.ThrowIfNull(fill);
        steps ??= RealSteps;
        var full = Full(dir);
        var parent = Path.GetDirectoryName(full)!;
        var name = Path.GetFileName(full);
        CleanLeftovers(parent, name, steps);
        var tmp = Path.Combine(parent, $".{name}.{Environment.ProcessId}.tmp");
        var old = Path.Combine(parent, $".{name}.{Environment.ProcessId}.old");
        try
        {
            Directory.CreateDirectory(tmp);
            fill(tmp);
            WriteMarker(tmp, marker, kind);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            TryDelete(tmp, steps);
            throw new FolderNotWrittenException($"cannot write the {kind} ({e.Message}); nothing was changed at '{dir}'", e);
        }
        catch
        {
            TryDelete(tmp, steps); // Whatever went wrong, the half-written folder goes; the caller reports.
            throw;
        }

        if (!Directory.Exists(full))
        {
            try
            {
                steps.Move(tmp, full);
                return;
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                TryDelete(tmp, steps);
                throw new FolderNotWrittenException($"cannot create the {kind} folder ({e.Message}); nothing was written", e);
            }
        }

        try
        {
            steps.Move(full, old);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            TryDelete(tmp, steps);
            throw new FolderNotWrittenException($"cannot replace the earlier {kind} ({e.Message}); it is left in place, unchanged", e);
        }

        try
        {
            steps.Move(tmp, full);
            steps.Delete(old);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // Put the earlier folder back, whole: the new one moves aside again if it got in, what the failed delete
            // may have removed of the old one is lost, so the old one is only restored when it is still complete.
            var restored = Restore(full, old, tmp, marker, kind, steps);
            TryDelete(tmp, steps);
            throw new FolderNotWrittenException(restored
                ? $"cannot replace the earlier {kind} ({e.Message}); it is left in place, unchanged"
                : $"cannot replace the earlier {kind} ({e.Message}); the new {kind} is in place and parts of the earlier one remain as '{old}', removed on the next run",
                e);
        }
    }

    /// <summary>Removes <c>.NAME.PID.tmp</c> and <c>.NAME.PID.old</c> of processes no longer running; an <c>.old</c> whose target is missing is put back.</summary>
    public static void CleanLeftovers(string parent, string name, IFolderSteps? steps = null)
    {
        steps ??= RealSteps;
        foreach (var entry in Directory.EnumerateDirectories(parent, $".{name}.*"))
        {
            var rest = Path.GetFileName(entry)[(name.Length + 2)..];
            var dot = rest.LastIndexOf('.');
            if (dot <= 0 || !int.TryParse(rest.AsSpan(0, dot), NumberStyles.None, CultureInfo.InvariantCulture, out var pid) || (pid != Environment.ProcessId && IsAlive(pid)))
            {
                continue;
            }

            var suffix = rest[(dot + 1)..];
            var target = Path.Combine(parent, name);
            try
            {
                if (suffix == "old" && !Directory.Exists(target) && !File.Exists(target))
                {
                    steps.Move(entry, target);
                }
                else if (suffix is "old" or "tmp")
                {
                    steps.Delete(entry);
                }
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                // A leftover that cannot be removed is left for the user; it does not stop this run.
            }
        }
    }

    /// <summary>SHA-256 of a file, lower-case hex.</summary>
    public static string Hash(string path)
    {
        using var s = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read);
        return Convert.ToHexStringLower(SHA256.HashData(s));
    }

    private static bool Restore(string full, string old, string tmp, string marker, string kind, IFolderSteps steps)
    {
        try
        {
            if (!Directory.Exists(old) || ReadMarker(Path.Combine(old, marker), kind) is not { } listed || FirstStranger(old, marker, listed) is not null
                || listed.Keys.Any(f => !File.Exists(Path.Combine(old, f))))
            {
                return false;
            }

            if (Directory.Exists(full))
            {
                steps.Move(full, tmp);
            }

            steps.Move(old, full);
            return true;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return false;
        }
    }

    private static void WriteMarker(string dir, string marker, string kind)
    {
        var sb = new StringBuilder();
        sb.Append(Layout).Append(' ').Append(kind).Append('\n');
        sb.Append("written by nffit ").Append(NffitApp.Version).Append("; every file below is nffit's own; anything else stops nffit from replacing this folder\n");
        foreach (var file in Directory.EnumerateFiles(dir, "*", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            var rel = Path.GetRelativePath(dir, file).Replace(Path.DirectorySeparatorChar, '/');
            sb.Append("sha256 ").Append(Hash(file)).Append(' ').Append(rel).Append('\n');
        }

        File.WriteAllText(Path.Combine(dir, marker), sb.ToString(), new UTF8Encoding(false));
    }

    /// <summary>The listed files and their hashes; null for a marker of another layout or kind (an earlier version's).</summary>
    private static Dictionary<string, string>? ReadMarker(string path, string kind)
    {
        if (!File.Exists(path) || new FileInfo(path).Length > 1 << 20)
        {
            return null;
        }

        var lines = File.ReadAllLines(path);
        if (lines.Length < 2 || lines[0] != $"{Layout} {kind}")
        {
            return null;
        }

        var listed = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var line in lines.Skip(2))
        {
            var parts = line.Split(' ', 3);
            if (parts.Length != 3 || parts[0] != "sha256" || parts[1].Length != 64)
            {
                return null;
            }

            listed[parts[2]] = parts[1];
        }

        return listed;
    }

    private static (string Name, string Why)? FirstStranger(string dir, string marker, Dictionary<string, string> listed)
    {
        foreach (var entry in Directory.EnumerateFileSystemEntries(dir, "*", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            var rel = Path.GetRelativePath(dir, entry).Replace(Path.DirectorySeparatorChar, '/');
            if (rel == marker)
            {
                continue;
            }

            var info = new FileInfo(entry);
            if (info.LinkTarget is not null)
            {
                return (rel, "is a link nffit did not make");
            }

            if (Directory.Exists(entry))
            {
                if (!listed.Keys.Any(k => k.StartsWith(rel + "/", StringComparison.Ordinal)))
                {
                    return (rel, "is a folder nffit did not write");
                }

                continue;
            }

            if (!listed.TryGetValue(rel, out var hash))
            {
                return (rel, "nffit did not write");
            }

            if (!string.Equals(Hash(entry), hash, StringComparison.Ordinal))
            {
                return (rel, "was changed since nffit wrote it");
            }
        }

        return null;
    }

    private static string FirstEntry(string dir) =>
        Path.GetFileName(Directory.EnumerateFileSystemEntries(dir).Order(StringComparer.Ordinal).First());

    private static bool IsAlive(int pid)
    {
        try
        {
            using var p = Process.GetProcessById(pid);
            return !p.HasExited;
        }
        catch (Exception e) when (e is ArgumentException or InvalidOperationException)
        {
            return false;
        }
    }

    private static void TryDelete(string dir, IFolderSteps steps)
    {
        try
        {
            if (Directory.Exists(dir))
            {
                steps.Delete(dir);
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // Left for the next run's clean-up.
        }
    }

    private static Diagnostic Fail(string code, string message, string dir) => new(Severity.Error, code, message, dir);

    private static string Full(string dir) => Path.TrimEndingDirectorySeparator(Path.GetFullPath(dir));

    private sealed class Real : IFolderSteps
    {
        public void Move(string from, string to) => Directory.Move(from, to);

        public void Delete(string dir) => Directory.Delete(dir, recursive: true);
    }
}
