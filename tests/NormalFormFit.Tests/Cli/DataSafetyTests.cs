using System.Security.Cryptography;
using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// docs/data-safety.md, clause by clause: inputs are never written, a folder is replaced only when every entry in it
/// is nffit's own and unchanged, simulate does not overwrite, a failed replace leaves the old output and says so,
/// leftovers of killed runs are cleaned up. Each test hashes what must not change before and after.
/// </summary>
public sealed class DataSafetyTests : IDisposable
{
    private readonly string dir = Directory.CreateTempSubdirectory("nffit-safety-").FullName;

    public DataSafetyTests()
    {
        // Invented demo scenario: four rotor runs above onset.
        var (code, _, err) = CliTestHost.Run("simulate", "--params", "1.02,1.05,1.1,1.2", "--revolutions", "5", "--dt", "0.02",
            "--noise", "0.01", "--out", Data, "--quiet");
        Assert.True(code == 0, err);
    }

    private string Data => Path.Combine(dir, "data");

    private string Manifest => Path.Combine(Data, "manifest.csv");

    public void Dispose() => Directory.Delete(dir, recursive: true);

    // Clause 1: no output may be an input, through links too.
    [Theory]
    [InlineData("--json", "manifest.csv")]
    [InlineData("--json", "run-00.csv")]
    [InlineData("--runs-only", "manifest.csv")]
    [InlineData("--runs-only", "run-02.csv")]
    public void Analyze_OutputFileThatIsAnInput_IsRefusedWithExitTwoAndNothingChanges(string option, string input)
    {
        var before = HashTree(dir);
        var (code, stdout, stderr) = CliTestHost.Run("analyze", Manifest, option, Path.Combine(Data, input));

        Assert.Equal(2, code);
        Assert.Empty(stdout);
        Assert.Contains($"{option} would overwrite the input", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    [Fact]
    public void Analyze_JsonThroughASymbolicLinkToARunFile_IsRefused()
    {
        var link = Path.Combine(dir, "innocent.json");
        File.CreateSymbolicLink(link, Path.Combine(Data, "run-01.csv"));
        var before = HashTree(Data);

        var (code, _, stderr) = CliTestHost.Run("analyze", Manifest, "--json", link);

        Assert.Equal(2, code);
        Assert.Contains("would overwrite the input", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(Data));
    }

    [Fact]
    public void Analyze_OutFolderThatHoldsTheInputs_IsRefused()
    {
        var before = HashTree(dir);
        var (code, _, stderr) = CliTestHost.Run("analyze", Manifest, "--out", Data);

        Assert.Equal(2, code);
        Assert.Contains("--out names a folder that holds the input", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    [Fact]
    public void Combine_JsonOnItsOwnInput_IsRefused()
    {
        var lines = Path.Combine(dir, "runs.jsonl");
        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--runs-only", lines, "--quiet").Code);
        var before = HashTree(dir);

        var (code, _, stderr) = CliTestHost.Run("combine", lines, "--json", lines);

        Assert.Equal(2, code);
        Assert.Contains("--json would overwrite the input", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    // Clause 2: --out replaces only a folder whose every entry nffit wrote, unchanged.
    [Fact]
    public void Analyze_OutOverItsOwnEarlierReport_ReplacesIt()
    {
        var report = Path.Combine(dir, "report");
        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--out", report, "--quiet").Code);
        var first = File.ReadAllText(Path.Combine(report, ReportFolder.Marker));
        Assert.StartsWith("nffit-folder/2 report\n", first, StringComparison.Ordinal);
        Assert.Contains(" report.json\n", first, StringComparison.Ordinal);

        var (code, _, stderr) = CliTestHost.Run("analyze", Manifest, "--out", report, "--quiet");

        Assert.True(code == 0, stderr);
        Assert.True(File.Exists(Path.Combine(report, "report.json")));
    }

    [Theory]
    [InlineData("notes.txt", "nffit did not write")]
    [InlineData("data/raw.csv", "is a folder nffit did not write")]
    [InlineData("report.txt", "was changed since nffit wrote it")]
    public void Analyze_OutOverAReportWithAStrangerOrAChangedFile_IsRefusedNamingIt(string entry, string why)
    {
        var report = Path.Combine(dir, "report");
        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--out", report, "--quiet").Code);
        var path = Path.Combine(report, entry);
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        File.AppendAllText(path, "the user's own words\n");
        var before = HashTree(dir);

        var (code, _, stderr) = CliTestHost.Run("analyze", Manifest, "--out", report);

        Assert.Equal(2, code);
        Assert.Contains($"'{entry.Split('/')[0]}', which {why}", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    [Fact]
    public void Analyze_OutOverAnEarlierVersionsReport_IsRefusedWithWhatToDo()
    {
        var report = Path.Combine(dir, "old-report");
        Directory.CreateDirectory(report);
        File.WriteAllText(Path.Combine(report, ReportFolder.Marker), "written by nffit 0.0.9\n");
        File.WriteAllText(Path.Combine(report, "report.json"), "{}");
        var before = HashTree(dir);

        var (code, _, stderr) = CliTestHost.Run("analyze", Manifest, "--out", report);

        Assert.Equal(2, code);
        Assert.Contains("an earlier version wrote it", stderr, StringComparison.Ordinal);
        Assert.Contains("delete the folder yourself or give another one", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    // Clause 3: simulate refuses a non-empty folder unless --replace and the folder is simulate's own.
    [Fact]
    public void Simulate_IntoItsOwnEarlierOutput_NeedsReplace()
    {
        var before = HashTree(dir);
        var (code, _, stderr) = CliTestHost.Run("simulate", "--params", "1.5", "--out", Data, "--quiet");
        Assert.Equal(2, code);
        Assert.Contains("add --replace", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));

        var replaced = CliTestHost.Run("simulate", "--params", "1.5", "--out", Data, "--quiet", "--replace");
        Assert.True(replaced.Code == 0, replaced.Err);
        Assert.Equal(["manifest.csv", "run-00.csv"], Directory.GetFiles(Data).Select(Path.GetFileName).Where(f => f![0] != '.').Order(StringComparer.Ordinal));
    }

    [Fact]
    public void Simulate_WithReplace_IntoAFolderWithAUserFile_IsRefusedAndKeepsEverything()
    {
        File.WriteAllText(Path.Combine(Data, "notes.txt"), "mine\n");
        var before = HashTree(dir);

        var (code, _, stderr) = CliTestHost.Run("simulate", "--params", "1.5", "--out", Data, "--replace");

        Assert.Equal(2, code);
        Assert.Contains("'notes.txt', which nffit did not write", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    [Fact]
    public void Simulate_IntoAFolderNffitDidNotWrite_IsRefused()
    {
        var other = Path.Combine(dir, "other");
        Directory.CreateDirectory(other);
        File.WriteAllText(Path.Combine(other, "manifest.csv"), "file,param\n");
        var before = HashTree(dir);

        var (code, _, stderr) = CliTestHost.Run("simulate", "--params", "1.5", "--out", other, "--replace");

        Assert.Equal(2, code);
        Assert.Contains("holds files nffit did not write", stderr, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    // Clause 4: a failed replace leaves the earlier output in place and says so.
    [Theory]
    [InlineData(1)] // moving the earlier report aside fails
    [InlineData(2)] // moving the new report in fails
    [InlineData(3)] // deleting the earlier report fails (a read-only report, as a non-root user meets it)
    public void ReportFolder_WhenAStepOfTheSwapFails_LeavesTheEarlierReportUnchangedAndSaysSo(int failingStep)
    {
        var report = Path.Combine(dir, "report");
        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--out", report, "--quiet").Code);
        var before = HashTree(report);
        var result = NormalFormFit.Analysis.ManifestAnalyzer.Analyze(Manifest).Value!;

        var e = Assert.Throws<FolderNotWrittenException>(() => ReportFolder.Write(report, result, "manifest.csv", steps: new FailingSteps(failingStep)));

        Assert.Contains("it is left in place, unchanged", e.Message, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(report));
        Assert.Empty(Directory.GetDirectories(dir, ".report.*"));
    }

    [Fact]
    public void Analyze_WhenTheReportCannotBeReplaced_ExitsTwoAndTheMessageSaysTheEarlierOneIsUnchanged()
    {
        var report = Path.Combine(dir, "report");
        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--out", report, "--quiet").Code);
        var before = HashTree(report);
        var result = NormalFormFit.Analysis.ManifestAnalyzer.Analyze(Manifest);
        using var err = new StringWriter();

        var ok = CommandOutput.TryWriteFolder(report, err, () => ReportFolder.Write(report, result.Value!, "m", steps: new FailingSteps(3)));

        Assert.False(ok);
        Assert.Contains("cannot replace the earlier report", err.ToString(), StringComparison.Ordinal);
        Assert.Contains("left in place, unchanged", err.ToString(), StringComparison.Ordinal);
        Assert.Equal(before, HashTree(report));
    }

    // Clause 6: leftovers of killed runs are removed on the next run in that folder.
    [Fact]
    public void Analyze_CleansUpLeftoversOfKilledRuns_AndPutsBackAnOrphanedEarlierReport()
    {
        const int deadPid = int.MaxValue - 7; // No process has this id (Linux pid_max is at most 2^22).
        var report = Path.Combine(dir, "report");
        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--out", report, "--quiet").Code);
        var before = HashTree(report);

        // A run killed between "move the old report aside" and "move the new one in".
        Directory.Move(report, Path.Combine(dir, $".report.{deadPid}.old"));
        Directory.CreateDirectory(Path.Combine(dir, $".report.{deadPid}.tmp"));
        File.WriteAllText(Path.Combine(dir, $".out.json.{deadPid}.tmp"), "{");

        OwnedFolder.CleanLeftovers(dir, "report");
        Assert.Equal(before, HashTree(report));
        Assert.Empty(Directory.GetDirectories(dir, ".report.*"));

        Assert.Equal(0, CliTestHost.Run("analyze", Manifest, "--json", Path.Combine(dir, "out.json"), "--quiet").Code);
        Assert.False(File.Exists(Path.Combine(dir, $".out.json.{deadPid}.tmp")));
    }

    private static Dictionary<string, string> HashTree(string root) =>
        Directory.EnumerateFiles(root, "*", SearchOption.AllDirectories)
            .ToDictionary(f => Path.GetRelativePath(root, f), f => Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(f))));

    /// <summary>Real steps, except that step number <c>failing</c> (counting moves and deletes) throws as a failing file system would.</summary>
    private sealed class FailingSteps(int failing) : IFolderSteps
    {
        private int step;

        public void Move(string from, string to)
        {
            Fail();
            Directory.Move(from, to);
        }

        public void Delete(string dir)
        {
            Fail();
            Directory.Delete(dir, recursive: true);
        }

        private void Fail()
        {
            if (++step == failing)
            {
                throw new UnauthorizedAccessException("Access to the path is denied (injected)");
            }
        }
    }
}
