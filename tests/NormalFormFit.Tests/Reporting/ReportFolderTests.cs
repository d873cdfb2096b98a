using System.Security.Cryptography;
using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Reporting;

/// <summary>Simulated run files on disk (invented demo: rotor, units "mA") and one report written from them.</summary>
public sealed class DemoFolder : IDisposable
{
    public DemoFolder()
    {
        Root = Directory.CreateTempSubdirectory("nffit-report-").FullName;
        var data = Path.Combine(Root, "data");
        Run("simulate", "--params", "1.02,1.04,1.07,1.1,1.2,1.3", "--out", data, "--noise", "0.01", "--revolutions", "5", "--quiet");
        Manifest = Path.Combine(data, "manifest.csv");
        var lines = File.ReadAllLines(Manifest);
        File.WriteAllLines(Manifest, [lines[0] + ",units", .. lines.Skip(1).Select(l => l + ",mA")]);
        Report = Path.Combine(Root, "report");
        var (code, stdout, stderr) = Run("analyze", Manifest, "--out", Report, "--quiet");
        Assert.True(code == 0, $"analyze exited {code}: {stderr}");
        QuietOutput = stdout + stderr;
    }

    public string Root { get; }

    public string Manifest { get; }

    public string Report { get; }

    public string QuietOutput { get; }

    public static (int Code, string Stdout, string Stderr) Run(params string[] args)
    {
        var stdout = new StringWriter();
        var stderr = new StringWriter();
        var code = NffitApp.Run(args, stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }

    public void Dispose() => Directory.Delete(Root, recursive: true);
}

[CollectionDefinition(Name)]
public sealed class DemoFolderGroup : ICollectionFixture<DemoFolder>
{
    public const string Name = "demo report folder";
}

[Collection(DemoFolderGroup.Name)]
public class ReportFolderTests(DemoFolder demo)
{
    [Fact]
    public void AnalyzeOut_WritesThePageEveryFigureAsPngAndSvgTheTablesAndTheJson()
    {
        string[] figures = ["field", "trend-a", "trend-period", "onsets", "scaling", "periods", "residuals"];
        string[] expected = ["report.html", "report.json", "report.txt", "runs.csv", "field.csv", ReportFolder.Marker, .. figures.SelectMany(f => new[] { f + ".png", f + ".svg" })];

        var written = Directory.GetFiles(demo.Report).Select(Path.GetFileName).ToArray();

        Assert.Equal(expected.Order(StringComparer.Ordinal), written.Order(StringComparer.Ordinal));
        Assert.DoesNotContain(Directory.GetDirectories(demo.Root), d => Path.GetFileName(d).StartsWith('.'));
    }

    [Fact]
    public void AnalyzeOut_WithQuiet_PrintsNothing()
    {
        Assert.Equal(string.Empty, demo.QuietOutput);
    }

    [Fact]
    public void AnalyzeOut_OverAnEarlierReport_ReplacesItWhole()
    {
        var target = Path.Combine(demo.Root, "again");
        Assert.Equal(0, DemoFolder.Run("analyze", demo.Manifest, "--out", target, "--quiet").Code);
        File.Delete(Path.Combine(target, "field.csv")); // A listed file that is missing does not stop a replace; a changed one does (DataSafetyTests).

        var (code, _, stderr) = DemoFolder.Run("analyze", demo.Manifest, "--out", target, "--quiet");

        Assert.True(code == 0, stderr);
        Assert.StartsWith("file,param,phase", File.ReadAllText(Path.Combine(target, "field.csv")), StringComparison.Ordinal);
    }

    [Fact]
    public void AnalyzeOut_IntoAFolderHoldingOtherFiles_ExitsWithBadInputAndTouchesNothing()
    {
        var target = Path.Combine(demo.Root, "notes");
        Directory.CreateDirectory(target);
        File.WriteAllText(Path.Combine(target, "mine.txt"), "keep me");

        var (code, stdout, stderr) = DemoFolder.Run("analyze", demo.Manifest, "--out", target);

        // Exit code 2 = bad input or usage (README, "Exit codes").
        Assert.Equal(2, code);
        Assert.Equal(string.Empty, stdout);
        Assert.Contains("holds files nffit did not write", stderr, StringComparison.Ordinal);
        Assert.Single(stderr.TrimEnd().Split('\n'));
        Assert.Equal(["mine.txt"], Directory.GetFiles(target).Select(Path.GetFileName));
        Assert.Equal("keep me", File.ReadAllText(Path.Combine(target, "mine.txt")));
    }

    [Fact]
    public void AnalyzeOut_LeavesTheInputsAsTheyWere()
    {
        var data = Path.GetDirectoryName(demo.Manifest)!;
        var before = Directory.GetFiles(data).ToDictionary(f => f, f => Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(f))));

        Assert.Equal(0, DemoFolder.Run("analyze", demo.Manifest, "--out", Path.Combine(demo.Root, "inputs-check"), "--quiet").Code);

        var after = Directory.GetFiles(data).ToDictionary(f => f, f => Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(f))));
        Assert.Equal(before, after);
    }
}
