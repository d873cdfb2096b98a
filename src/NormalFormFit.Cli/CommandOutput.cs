namespace NormalFormFit.Cli;

/// <summary>
/// The outputs the reporting commands share: the report folder and a JSON document, each written whole or not at
/// all, with one message and no stack trace when the place cannot be written.
/// </summary>
internal static class CommandOutput
{
    /// <summary>Runs <paramref name="write"/> (which writes the report folder); false, after one message, when it cannot be written.</summary>
    /// <param name="outDir">The folder, as the user gave it.</param>
    /// <param name="stderr">Where the message goes.</param>
    /// <param name="write">Writes the folder.</param>
    /// <param name="settle">Run after the attempt, before any message (e.g. to clear a progress line).</param>
    public static bool TryWriteFolder(string outDir, TextWriter stderr, Action write, Action? settle = null)
    {
        try
        {
            write();
            settle?.Invoke();
            return true;
        }
        catch (FolderNotWrittenException e)
        {
            settle?.Invoke();
            stderr.WriteLine($"nffit: {outDir}: error: {e.Message}; check that the folder and the one holding it are writable");
            return false;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            settle?.Invoke();
            stderr.WriteLine($"nffit: {outDir}: error: cannot write the report ({e.Message}); check that the folder is writable");
            return false;
        }
    }

    /// <summary>
    /// Writes a JSON document to standard output when <paramref name="jsonPath"/> is "-", else to that file by an
    /// atomic replace; false, after one message, when the file cannot be written.
    /// </summary>
    public static bool TryWriteJson(string jsonPath, Action<Stream> write, TextWriter stdout, TextWriter stderr)
    {
        if (jsonPath == "-")
        {
            using var buffer = new MemoryStream();
            write(buffer);
            stdout.WriteLine(System.Text.Encoding.UTF8.GetString(buffer.ToArray()));
            return true;
        }

        try
        {
            AtomicFile.Write(jsonPath, write);
            return true;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"nffit: {jsonPath}: error: cannot write the JSON report ({e.Message}); check that the folder exists and is writable");
            return false;
        }
    }
}
