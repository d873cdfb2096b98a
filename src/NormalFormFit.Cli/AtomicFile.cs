namespace NormalFormFit.Cli;

/// <summary>Writes a file whole or not at all: to a temporary file beside the target, then a rename.</summary>
internal static class AtomicFile
{
    public static void Write(string path, Action<Stream> write)
    {
        var full = Path.GetFullPath(path);
        var dir = Path.GetDirectoryName(full) ?? ".";
        var tmp = Path.Combine(dir, $".{Path.GetFileName(full)}.{Environment.ProcessId}.tmp");
        CleanLeftovers(dir, Path.GetFileName(full));
        try
        {
            using (var s = new FileStream(tmp, FileMode.Create, FileAccess.Write, FileShare.None))
            {
                write(s);
            }

            File.Move(tmp, full, overwrite: true);
        }
        finally
        {
            if (File.Exists(tmp))
            {
                File.Delete(tmp);
            }
        }
    }

    /// <summary>Deletes <c>.NAME.PID.tmp</c> files left by killed runs (processes no longer running) (docs/data-safety.md, clause 6).</summary>
    private static void CleanLeftovers(string dir, string name)
    {
        foreach (var file in Directory.EnumerateFiles(dir, $".{name}.*.tmp"))
        {
            var pid = Path.GetFileName(file)[(name.Length + 2)..^4];
            if (int.TryParse(pid, System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var id) && id != Environment.ProcessId && !IsAlive(id))
            {
                try
                {
                    File.Delete(file);
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    // Left for the user; it does not stop this run.
                }
            }
        }
    }

    private static bool IsAlive(int pid)
    {
        try
        {
            using var p = System.Diagnostics.Process.GetProcessById(pid);
            return !p.HasExited;
        }
        catch (Exception e) when (e is ArgumentException or InvalidOperationException)
        {
            return false;
        }
    }
}
