using System.Text;
using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Cli;

/// <summary>Runs analysed apart (analyze --runs-only) and merged (combine) give the same answer as one analysis.</summary>
public sealed class RunsOnlyAndCombineTests : IDisposable
{
    private readonly string dir = Directory.CreateTempSubdirectory("nffit-combine-").FullName;

    public RunsOnlyAndCombineTests()
    {
        // Invented demo scenario: five rotor runs above onset.
        var (code, _, err) = Run("simulate", "--params", "1.01,1.02,1.04,1.07,1.1", "--revolutions", "6", "--dt", "0.02", "--noise", "0.01", "--out", dir, "--quiet");
        Assert.True(code == 0, err);
    }

    public void Dispose() => Directory.Delete(dir, recursive: true);

    [Fact]
    public void Combine_OfManifestSplitInTwo_WritesTheSameJsonAndTextAsOneAnalyze()
    {
        var manifest = Path.Combine(dir, "manifest.csv");
        var lines = File.ReadAllLines(manifest);
        File.WriteAllLines(Path.Combine(dir, "part-0.csv"), [lines[0], .. lines[1..3]]);
        File.WriteAllLines(Path.Combine(dir, "part-1.csv"), [lines[0], .. lines[3..]]);

        var whole = Run("analyze", manifest, "--json", Path.Combine(dir, "whole.json"));
        var p0 = Run("analyze", Path.Combine(dir, "part-0.csv"), "--runs-only", Path.Combine(dir, "part-0.jsonl"), "--threads", "1");
        var p1 = Run("analyze", Path.Combine(dir, "part-1.csv"), "--runs-only", Path.Combine(dir, "part-1.jsonl"), "--threads", "2");
        var merged = Run("combine", Path.Combine(dir, "part-0.jsonl"), Path.Combine(dir, "part-1.jsonl"), "--json", Path.Combine(dir, "merged.json"));

        Assert.Equal((0, 0, 0, 0), (whole.Code, p0.Code, p1.Code, merged.Code));
        Assert.Equal(2, File.ReadAllLines(Path.Combine(dir, "part-0.jsonl")).Length);
        Assert.Equal(File.ReadAllText(Path.Combine(dir, "whole.json")), File.ReadAllText(Path.Combine(dir, "merged.json")));
        Assert.Equal(whole.Out, merged.Out);
    }

    [Fact]
    public void Analyze_WithOneOrTwoThreads_WritesTheSameJson()
    {
        var manifest = Path.Combine(dir, "manifest.csv");
        Assert.Equal(0, Run("analyze", manifest, "--threads", "1", "--json", Path.Combine(dir, "t1.json"), "--quiet").Code);
        Assert.Equal(0, Run("analyze", manifest, "--threads", "2", "--json", Path.Combine(dir, "t2.json"), "--quiet").Code);

        Assert.Equal(File.ReadAllText(Path.Combine(dir, "t1.json")), File.ReadAllText(Path.Combine(dir, "t2.json")));
    }

    [Fact]
    public void RunLines_ReadBackAndWrittenAgain_AreByteForByteTheSame()
    {
        // Round trip of every number, NaN included (runs far from onset or without a bottleneck carry NaN).
        var first = Path.Combine(dir, "a.jsonl");
        Assert.Equal(0, Run("analyze", Path.Combine(dir, "manifest.csv"), "--runs-only", first, "--quiet").Code);
        var set = NormalFormFit.Reporting.RunLines.Read([first]).Value!;
        using var again = new MemoryStream();
        NormalFormFit.Reporting.RunLines.Write(set, again);

        Assert.Equal(File.ReadAllBytes(first), again.ToArray());
    }

    [Fact]
    public void Combine_OfAnEditedLine_FailsWithExitCode2NamingFileAndLine()
    {
        var file = Path.Combine(dir, "runs.jsonl");
        Assert.Equal(0, Run("analyze", Path.Combine(dir, "manifest.csv"), "--runs-only", file, "--quiet").Code);
        var lines = File.ReadAllLines(file);
        lines[2] = lines[2][..(lines[2].Length / 2)];
        File.WriteAllLines(file, lines);

        var (code, stdout, stderr) = Run("combine", file);

        Assert.Equal(2, code);
        Assert.Empty(stdout);
        Assert.Contains($"{file}:3:", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void RunsOnly_WhenARunFileIsBad_WritesNothingAndExitsWith2()
    {
        File.AppendAllText(Path.Combine(dir, "run-01.csv"), "12.5,not-a-number\n");
        var file = Path.Combine(dir, "runs.jsonl");

        var (code, _, stderr) = Run("analyze", Path.Combine(dir, "manifest.csv"), "--runs-only", file);

        Assert.Equal(2, code);
        Assert.Contains("run-01.csv", stderr, StringComparison.Ordinal);
        Assert.False(File.Exists(file));
        Assert.Empty(Directory.GetFiles(dir, "*.tmp"));
    }

    private static (int Code, string Out, string Err) Run(params string[] args)
    {
        var stdout = new StringWriter(new StringBuilder());
        var stderr = new StringWriter(new StringBuilder());
        var code = NffitApp.Run(args, stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }
}
