namespace NormalFormFit.Cli;

/// <summary>Writes a file whole or not at all: to a temporary file beside the target, then a rename.</summary>
internal static class AtomicFile
{
    public static void Write(string path, Action<Stream> write)
    {
        var full = Path.GetFullPath(path);
        var dir = Path.GetDirectoryName(full) ?? ".";
        var tmp = Path.Combine(dir, $".{Path.GetFileName(full)}.{Environment.ProcessId}.tmp");
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
}
