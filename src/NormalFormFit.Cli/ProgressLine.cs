namespace NormalFormFit.Cli;

/// <summary>
/// A one-line progress display on standard error, redrawn in place. Silent unless standard error is the
/// real console and a terminal (not redirected), so logs and pipes never receive it.
/// </summary>
internal sealed class ProgressLine
{
    private readonly TextWriter? writer;
    private int lastLength;

    private ProgressLine(TextWriter? writer) => this.writer = writer;

    /// <summary>A display on <paramref name="stderr"/> when it is an interactive console and not <paramref name="quiet"/>.</summary>
    public static ProgressLine For(TextWriter stderr, bool quiet)
    {
        // The redraws' CRs are ours: they go around the message writer that escapes echoed CRs.
        var raw = stderr is SafeMessageWriter safe ? safe.Inner : stderr;
        return new(!quiet && ReferenceEquals(raw, Console.Error) && !Console.IsErrorRedirected ? raw : null);
    }

    /// <summary>Shows "what done/total".</summary>
    public void Report(string what, int done, int total)
    {
        if (writer is null)
        {
            return;
        }

        var text = total > 0 ? $"nffit: {what} {done}/{total}" : $"nffit: {what}: {done}";
        lock (this)
        {
            writer.Write("\r" + text.PadRight(lastLength));
            lastLength = text.Length;
            writer.Flush();
        }
    }

    /// <summary>A counter reported synchronously (on the reporting thread), so nothing is drawn after <see cref="Clear"/>.</summary>
    public IProgress<int> Counter(string what) => new SyncProgress(done => Report(what, done, 0));

    /// <summary>Erases the line.</summary>
    public void Clear()
    {
        if (writer is null || lastLength == 0)
        {
            return;
        }

        lock (this)
        {
            writer.Write("\r" + new string(' ', lastLength) + "\r");
            writer.Flush();
            lastLength = 0;
        }
    }

    private sealed class SyncProgress(Action<int> report) : IProgress<int>
    {
        public void Report(int value) => report(value);
    }
}
