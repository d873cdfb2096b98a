using NormalFormFit.Analysis;
using NormalFormFit.Reporting;

namespace NormalFormFit.Cli;

/// <summary>
/// <c>nffit analyze MANIFEST --runs-only FILE</c>: the per-run half of the analysis, written as JSON Lines
/// (one run per line, whole or not at all) for <c>nffit combine</c>. Runs are independent, so a manifest split
/// into parts can be analysed on many machines.
/// </summary>
internal static class RunsOnlyCommand
{
    public static int Execute(string manifestPath, string linesPath, bool quiet, AnalyzeOptions options, TextWriter stdout, TextWriter stderr, ProgressLine progress)
    {
        if (CommandGuard.ManifestCommand(manifestPath, [new PlannedOutput("--runs-only", linesPath, Folder: false)], stderr) is { } refused)
        {
            return refused;
        }

        var result = ManifestAnalyzer.AnalyzeRuns(manifestPath, options, progress.Counter("runs analysed"));
        progress.Clear();
        if (result.Value is null)
        {
            foreach (var d in result.Diagnostics)
            {
                stderr.WriteLine($"nffit: {d}");
            }

            return ExitCodes.BadInput;
        }

        try
        {
            AtomicFile.Write(linesPath, s => RunLines.Write(result.Value, s));
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"nffit: {linesPath}: error: cannot write the run lines ({e.Message}); check that the folder exists and is writable");
            return ExitCodes.BadInput;
        }

        if (!quiet)
        {
            stdout.WriteLine($"wrote {result.Value.Runs.Count} run result(s) to {linesPath}; merge with 'nffit combine'");
        }

        return ExitCodes.Ok;
    }
}
