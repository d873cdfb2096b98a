using System.CommandLine;
using NormalFormFit.Analysis;
using NormalFormFit.Reporting;

namespace NormalFormFit.Cli;

/// <summary>
/// <c>nffit combine FILE...</c>: merges run lines written by <c>nffit analyze --runs-only</c> into the full
/// analysis, with the same text and JSON output as <c>nffit analyze</c>. Runs keep the order of the files and
/// of the lines within them.
/// </summary>
internal static class CombineCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        var files = new Argument<string[]>("files") { Description = "run-line files written by 'nffit analyze --runs-only', in manifest order", Arity = ArgumentArity.OneOrMore };
        var json = new Option<string?>("--json") { Description = "also write the JSON report to FILE ('-' for standard output, which then carries only the JSON)" };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var verbose = new Option<bool>("--verbose") { Description = "print details of internal errors" };
        var cmd = new Command("combine", "Merge per-run results from 'analyze --runs-only' into the onset analysis")
        {
            files, json, quiet, verbose,
        };
        cmd.SetAction(pr => Execute(pr.GetValue(files)!, pr.GetValue(json), pr.GetValue(quiet), stdout, stderr));
        return cmd;
    }

    internal static int Execute(IReadOnlyList<string> files, string? jsonPath, bool quiet, TextWriter stdout, TextWriter stderr)
    {
        if (CommandGuard.Combine(files, jsonPath is null ? [] : [new PlannedOutput("--json", jsonPath, Folder: false)], stderr) is { } refused)
        {
            return refused;
        }

        var set = RunLines.Read(files, uniqueRuns: true);
        if (set.Value is not null && RunSetSanity.Parameters([.. set.Value.Runs.Select(r => r.Param)], files[0]) is { } absurd)
        {
            return CommandGuard.Stop(stderr, absurd);
        }

        var result = set.Value is null
            ? new Ingest.Loaded<AnalysisReport>(null, set.Diagnostics)
            : ManifestAnalyzer.Combine(set.Value, files[0], set.Diagnostics);
        return AnalyzeCommand.Report(result, jsonPath, quiet, stdout, stderr);
    }
}
