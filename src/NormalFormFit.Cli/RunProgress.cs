namespace NormalFormFit.Cli;

/// <summary>
/// "analysed k runs" on standard error, rewritten in place, only when standard error is a terminal and the
/// user did not ask for quiet: redirected logs and tests see nothing.
/// </summary>
internal sealed class RunProgress(TextWriter stderr) : IProgress<int>
{
    private readonly Lock gate = new();

    public static IProgress<int>? ForTerminal(TextWriter stderr, bool quiet) =>
        quiet || !ReferenceEquals(stderr, Console.Error) || Console.IsErrorRedirected ? null : new RunProgress(stderr);

    public void Report(int value)
    {
        lock (gate)
        {
            stderr.Write($"\rnffit: analysed {value} run(s)…");
            stderr.Flush();
        }
    }

    /// <summary>Ends the progress line.</summary>
    public static void Finish(IProgress<int>? progress, TextWriter stderr)
    {
        if (progress is RunProgress)
        {
            stderr.Write("\r\u001b[K");
        }
    }
}
