using System.Runtime.InteropServices;

namespace NormalFormFit.Cli;

/// <summary>An output a command will write: the option that names it, the path, and whether it is a folder.</summary>
/// <param name="Option">The option as the user wrote it, e.g. <c>--json</c>.</param>
/// <param name="Path">The path as given.</param>
/// <param name="Folder">True for a folder the command replaces or writes into.</param>
internal sealed record PlannedOutput(string Option, string Path, bool Folder)
{
    /// <summary>The outputs of a reporting command: the report folder (<c>--out</c>) and the JSON file (<c>--json</c>), each when given.</summary>
    public static List<PlannedOutput> OfReport(string? outDir, string? jsonPath)
    {
        var outputs = new List<PlannedOutput>();
        if (outDir is not null)
        {
            outputs.Add(new PlannedOutput("--out", outDir, Folder: true));
        }

        if (jsonPath is not null)
        {
            outputs.Add(new PlannedOutput("--json", jsonPath, Folder: false));
        }

        return outputs;
    }
}

/// <summary>
/// Checks every input and output path of a command before any work (docs/data-safety.md, clauses 1 and 7): an input
/// must be a regular file in UTF-8 text, and no output may resolve, through symbolic links too, to an input or to a
/// folder that holds one.
/// </summary>
internal static class PathGuard
{
    /// <summary>Bytes looked at to name a file's encoding.</summary>
    private const int SniffBytes = 1 << 16;

    /// <summary>Null when <paramref name="path"/> can be read as a text input without blocking; else the error.</summary>
    /// <param name="path">The path as given.</param>
    /// <param name="what">What the file should be, for the message ("the manifest", "a run file").</param>
    public static Diagnostic? CheckInput(string path, string what)
    {
        if (string.IsNullOrWhiteSpace(path) || path.Contains('\0', StringComparison.Ordinal))
        {
            return new Diagnostic(Severity.Error, "not-a-file", $"the file name is empty or holds a NUL character; give the path of {what}", path.Length == 0 ? "''" : path);
        }

        if (Directory.Exists(path))
        {
            return new Diagnostic(Severity.Error, "not-a-file",
                $"this is a folder, not a file; give the path of {what}", path);
        }

        if (!File.Exists(path))
        {
            return null; // The reader says "does not exist" with its own advice.
        }

        if (FileType(path) is { } type && type != RegularFile)
        {
            var kind = type switch
            {
                Fifo => "a named pipe (FIFO)",
                CharDevice or BlockDevice => "a device",
                Socket => "a socket",
                _ => "not a regular file",
            };
            return new Diagnostic(Severity.Error, "not-a-regular-file",
                $"this is {kind}, not a saved file, and reading it could wait for ever; save the data to a file and give its path", path);
        }

        return Encoding(path);
    }

    /// <summary>
    /// The error when the file starts as UTF-16 (a byte-order mark, or NUL bytes between ASCII ones) or holds bytes that
    /// are not UTF-8 but read as Latin-1 (ISO 8859-1); null for UTF-8 (or ASCII) and for files that are not text at all,
    /// which the readers name themselves.
    /// </summary>
    public static Diagnostic? Encoding(string path)
    {
        byte[] head;
        try
        {
            using var s = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite);
            head = new byte[(int)Math.Min(SniffBytes, s.Length)];
            s.ReadExactly(head);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return null; // The reader reports "unreadable".
        }

        const string fix = "re-save the file as UTF-8 (in most editors: Save as, encoding UTF-8) or convert it, e.g. with iconv";
        if (head.Length >= 2 && ((head[0] == 0xFF && head[1] == 0xFE) || (head[0] == 0xFE && head[1] == 0xFF)) || LooksUtf16(head))
        {
            return new Diagnostic(Severity.Error, "utf16-text", $"the file is UTF-16 text; nffit reads UTF-8: {fix}", path, 1, 1);
        }

        // Cut at the last line end, so that a character split by the sniff limit is not counted as invalid.
        var end = head.Length == SniffBytes ? Math.Max(0, Array.LastIndexOf(head, (byte)'\n') + 1) : head.Length;
        var span = head.AsSpan(0, end);
        // Latin-1 and Windows-1252 text uses 0x80–0xFD for letters and signs (é, µ, °, €); 0xFE and 0xFF (þ, ÿ) are
        // rare in text and common in binary data, which the readers name as "not text".
        if (System.Text.Unicode.Utf8.IsValid(span) || span.IndexOfAnyInRange((byte)0, (byte)8) >= 0 || span.IndexOfAnyInRange((byte)0xFE, (byte)0xFF) >= 0)
        {
            return null;
        }

        // First invalid byte: its line and column (characters before it on its line, read as Latin-1).
        var bad = FirstInvalidUtf8(span);
        var lineStart = span[..bad].LastIndexOf((byte)'\n') + 1;
        var line = span[..bad].Count((byte)'\n') + 1;
        var column = System.Text.Encoding.UTF8.GetCharCount(span[lineStart..bad]) + 1;
        return new Diagnostic(Severity.Error, "latin1-text",
            $"the file is not UTF-8: byte 0x{span[bad]:X2} reads as '{(char)span[bad]}' in Latin-1 (ISO 8859-1) or Windows-1252; {fix}",
            path, line, column);
    }

    /// <summary>
    /// Null when no output is an input or holds one; else the error naming the option, the path and what to do.
    /// Paths are compared after resolving symbolic links (<see cref="RealPath"/>).
    /// </summary>
    public static Diagnostic? CheckOutputs(IEnumerable<string> inputs, IReadOnlyList<PlannedOutput> outputs)
    {
        var real = inputs.Select(i => (Given: i, Real: RealPath(i))).ToList();
        foreach (var o in outputs)
        {
            if (o.Path == "-")
            {
                continue;
            }

            var target = RealPath(o.Path);
            foreach (var (given, input) in real)
            {
                if (string.Equals(target, input, StringComparison.Ordinal))
                {
                    return new Diagnostic(Severity.Error, "output-is-input",
                        $"{o.Option} would overwrite the input '{given}'; inputs are never written: give another file name", o.Path);
                }

                if (o.Folder && input.StartsWith(target + Path.DirectorySeparatorChar, StringComparison.Ordinal))
                {
                    return new Diagnostic(Severity.Error, "output-holds-input",
                        $"{o.Option} names a folder that holds the input '{given}', which writing the folder could replace; choose another folder", o.Path);
                }
            }
        }

        return null;
    }

    /// <summary>
    /// The path with every symbolic link resolved: the real path of the deepest existing ancestor, then the rest
    /// as written (POSIX realpath(3) for the part that exists).
    /// </summary>
    public static string RealPath(string path) => Resolve(Path.GetFullPath(path), 0);

    private static string Resolve(string full, int depth)
    {
        var root = Path.GetPathRoot(full) ?? "/";
        var parts = full[root.Length..].Split(Path.DirectorySeparatorChar, StringSplitOptions.RemoveEmptyEntries);
        var current = root;
        for (var i = 0; i < parts.Length; i++)
        {
            var next = Path.Combine(current, parts[i]);
            FileSystemInfo info = new FileInfo(next);
            if (info.LinkTarget is null && !info.Exists && !Directory.Exists(next))
            {
                // Does not exist: the rest is appended as written.
                return Path.Combine([current, .. parts[i..]]);
            }

            if (info.LinkTarget is not null && depth < 40)
            {
                var target = info.ResolveLinkTarget(returnFinalTarget: true);
                if (target is not null)
                {
                    next = Resolve(Path.GetFullPath(target.FullName), depth + 1);
                }
            }

            current = next;
        }

        return Path.TrimEndingDirectorySeparator(current);
    }

    private static bool LooksUtf16(ReadOnlySpan<byte> head)
    {
        // ASCII text in UTF-16 has a NUL beside nearly every other byte.
        var n = Math.Min(head.Length, 512) & ~1;
        if (n < 4)
        {
            return false;
        }

        int evenNul = 0, oddNul = 0;
        for (var i = 0; i < n; i += 2)
        {
            evenNul += head[i] == 0 ? 1 : 0;
            oddNul += head[i + 1] == 0 ? 1 : 0;
        }

        var pairs = n / 2;
        return (oddNul > 0.8 * pairs && evenNul < 0.1 * pairs) || (evenNul > 0.8 * pairs && oddNul < 0.1 * pairs);
    }

    private static int FirstInvalidUtf8(ReadOnlySpan<byte> span)
    {
        var i = 0;
        while (i < span.Length)
        {
            var status = System.Text.Rune.DecodeFromUtf8(span[i..], out _, out var consumed);
            if (status != System.Buffers.OperationStatus.Done)
            {
                return i;
            }

            i += consumed;
        }

        return 0;
    }

    // File types as the .NET runtime's own native layer reports them (its FileStatus.Mode, S_IFMT bits).
    private const int TypeMask = 0xF000;
    private const int Fifo = 0x1000;
    private const int CharDevice = 0x2000;
    private const int BlockDevice = 0x6000;
    private const int RegularFile = 0x8000;
    private const int Socket = 0xC000;

    /// <summary>
    /// The file type (S_IFMT bits of stat(2), following links) without opening the file, which would block on a FIFO;
    /// null where it cannot be asked (the runtime's native layer is not reachable, or another platform).
    /// </summary>
    private static int? FileType(string path)
    {
        if (!OperatingSystem.IsLinux() && !OperatingSystem.IsMacOS())
        {
            return null;
        }

        try
        {
            // FileStatus of System.Native: int32 Flags, int32 Mode, ... (a buffer larger than the whole record).
            var buffer = new byte[512];
            return SystemNativeStat(path, buffer) == 0 ? BitConverter.ToInt32(buffer, 4) & TypeMask : null;
        }
        catch (Exception e) when (e is DllNotFoundException or EntryPointNotFoundException)
        {
            return null;
        }
    }

    // A plain P/Invoke (no generated marshalling, which would need unsafe code): a UTF-8 path and a byte buffer.
#pragma warning disable SYSLIB1054
    [DllImport("libSystem.Native", EntryPoint = "SystemNative_Stat", CharSet = CharSet.Ansi, BestFitMapping = false, ThrowOnUnmappableChar = true)]
    [DefaultDllImportSearchPaths(DllImportSearchPath.SafeDirectories)]
    private static extern int SystemNativeStat(string path, [Out] byte[] output);
#pragma warning restore SYSLIB1054
}
