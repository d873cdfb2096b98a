using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// One source for the version: <c>nffit --version</c> prints the package version and the commit the build came from;
/// the JSON reports carry the package version alone as <c>tool_version</c>. The informational version
/// <c>VERSION+COMMIT</c> is what the .NET SDK writes when SourceRevisionId is known (common practice, no source).
/// </summary>
public sealed class ToolVersionTests
{
    [Fact]
    public void Split_OfVersionWithCommit_GivesBothParts()
    {
        var (package, commit) = ToolVersion.Split("1.2.3+9f43d8208b79e656ef84e8648bd2c907df6ecd5e");

        Assert.Equal("1.2.3", package);
        Assert.Equal("9f43d8208b79e656ef84e8648bd2c907df6ecd5e", commit);
    }

    [Theory]
    [InlineData("1.2.3")]
    [InlineData("1.2.3+")]
    public void Split_WithoutCommit_GivesNoCommit(string informational)
    {
        var (package, commit) = ToolVersion.Split(informational);

        Assert.Equal("1.2.3", package);
        Assert.Null(commit);
    }

    [Fact]
    public void Describe_WithoutCommit_SaysTheCommitIsUnknown() =>
        Assert.Equal("nffit 0.4.0 (commit unknown)", ToolVersion.Describe("0.4.0"));

    [Fact]
    public void VersionOption_PrintsPackageVersionAndCommit_AndExitsZero()
    {
        var (code, stdout, stderr) = CliTestHost.Run("--version");

        Assert.Equal(0, code);
        Assert.Equal("", stderr);
        Assert.Equal(ToolVersion.Line + Environment.NewLine, stdout);
        Assert.StartsWith($"nffit {NffitApp.Version} (commit ", stdout, StringComparison.Ordinal);
    }

    [Fact]
    public void ReportVersion_IsThePackageVersionWithoutCommit()
    {
        Assert.Equal(ToolVersion.Package, NffitApp.Version);
        Assert.DoesNotContain('+', NffitApp.Version);
        Assert.Matches(@"^\d+\.\d+\.\d+", NffitApp.Version);
    }

    [Fact]
    public void JsonReport_CarriesThePackageVersion()
    {
        using var folder = CliTestHost.NewFolder();
        var json = folder.File("report.json");
        var manifest = Path.Combine(RepoRoot(), "datasets", "demo-stirrer", "manifest.csv");

        var (code, _, _) = CliTestHost.Run("analyze", manifest, "--json", json, "--quiet");

        Assert.Equal(0, code);
        Assert.Contains($"\"tool_version\": \"{NffitApp.Version}\"", File.ReadAllText(json), StringComparison.Ordinal);
    }

    /// <summary>Shell completion (README, "Install as a .NET tool") asks the tool itself through System.CommandLine's suggest directive.</summary>
    [Fact]
    public void SuggestDirective_CompletesCommandsAndOptions()
    {
        var (code, commands, _) = CliTestHost.Run("[suggest:8]", "nffit an");
        var (code2, options, _) = CliTestHost.Run("[suggest:17]", "nffit analyze --t");

        Assert.Equal(0, code);
        Assert.Equal(["analyze"], Lines(commands));
        Assert.Equal(0, code2);
        Assert.Equal(["--threads", "--time-column", "--time-unit"], Lines(options));
    }

    private static string[] Lines(string text) => text.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries);

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "NormalFormFit.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("repository root not found above " + AppContext.BaseDirectory);
    }
}
