using System.CommandLine;

namespace NormalFormFit.Cli;

/// <summary>The command line: wires stages together and turns diagnostics into messages and exit codes.</summary>
internal static class NffitApp
{
    /// <summary>The package version written as <c>tool_version</c> into every report (see <see cref="ToolVersion"/>).</summary>
    public static string Version => ToolVersion.Package;

    /// <summary>Runs the tool with injected writers; returns the exit code. Never throws.</summary>
    public static int Run(string[] args, TextWriter stdout, TextWriter stderr)
    {
        // Every message passes through one writer that escapes what could act on a terminal (docs/data-safety.md).
        using var safe = new SafeMessageWriter(stderr);
        return RunSafely(args, stdout, safe);
    }

    /// <summary>
    /// The usage errors the command line finds in <paramref name="args"/> without running anything: the service
    /// checks the reading options of an upload with the same parser before it queues the job.
    /// </summary>
    public static IReadOnlyList<string> UsageErrors(string[] args) =>
        Parse(args, TextWriter.Null, TextWriter.Null).Errors.Select(e => e.Message).ToList();

    private static ParseResult Parse(string[] args, TextWriter stdout, TextWriter stderr)
    {
        var root = new RootCommand("nffit — saddle-node-on-circle onset analysis from phase recordings")
        {
            AnalyzeCommand.Create(stdout, stderr),
            SimulateCommand.Create(stdout, stderr),
            CompareCommand.Create(stdout, stderr),
            CombineCommand.Create(stdout, stderr),
            Service.ServeCommand.Create(stdout, stderr),
        };
        ToolVersion.Install(root, stdout);

        // No response files: '@m.csv' is a file name, not a file of more arguments.
        return root.Parse(args, new ParserConfiguration { ResponseFileTokenReplacer = null });
    }

    private static int RunSafely(string[] args, TextWriter stdout, TextWriter stderr)
    {
        var verbose = args.Contains("--verbose");
        try
        {
            var parsed = Parse(args, stdout, stderr);
            if (parsed.Errors.Count > 0)
            {
                foreach (var e in parsed.Errors)
                {
                    stderr.WriteLine($"nffit: usage: {e.Message}");
                }

                stderr.WriteLine("nffit: run 'nffit --help' or 'nffit COMMAND --help' for the options");
                return ExitCodes.BadInput;
            }

            return parsed.Invoke(new InvocationConfiguration { Output = stdout, Error = stderr, EnableDefaultExceptionHandler = false });
        }
#pragma warning disable CA1031 // The one place that turns any bug into exit code 70 and one line.
        catch (Exception e)
#pragma warning restore CA1031
        {
            stderr.WriteLine($"nffit: internal error ({e.GetType().Name}: {e.Message}); this is a bug, please report it with the input that caused it");
            if (verbose)
            {
                stderr.WriteLine(e.ToString());
            }

            return ExitCodes.Internal;
        }
    }
}
