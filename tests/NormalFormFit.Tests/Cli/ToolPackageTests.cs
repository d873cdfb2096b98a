using System.Diagnostics;
using System.Runtime.InteropServices;
using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// The install path a user takes (README, "Install as a .NET tool"): pack the command line as a .NET tool, install it
/// from a local folder into a tool path with no other package source, and check that the installed <c>nffit</c>
/// reports its version and writes the same JSON report and summary for the demo as the command line run in-process.
/// The sources are copied without <c>.git</c> first, as from a tarball: the build must not need git, and the
/// version then has no commit. Packs for this machine's runtime identifier only, to keep the cost to one build.
/// </summary>
public sealed class ToolPackageTests
{
    private static readonly TimeSpan StepTimeout = TimeSpan.FromMinutes(9);

    [Fact]
    public void PackedTool_InstalledFromLocalFolder_RunsTheDemoLikeTheCommandLine()
    {
        using var work = CliTestHost.NewFolder();
        var root = RepoRoot();
        var source = Path.Combine(work.Path, "source");
        CopySources(root, source);
        var feed = Path.Combine(work.Path, "feed");
        var tools = Path.Combine(work.Path, "tools");

        var pack = Dotnet(source, null,
            "pack", Path.Combine("src", "NormalFormFit.Cli", "NormalFormFit.Cli.csproj"), "-c", "Release", "-o", feed,
            $"-p:RuntimeIdentifiers={RuntimeInformation.RuntimeIdentifier}", "--disable-build-servers", "-nodeReuse:false", "-v", "q", "-nologo");
        Assert.True(pack.Code == 0, "dotnet pack failed:\n" + pack.Out + pack.Err);
        Assert.True(File.Exists(Path.Combine(feed, $"nffit.{NffitApp.Version}.nupkg")), "no tool package in " + feed);

        // Only the local folder as a source, and an empty package cache: the install cannot reach any registry.
        var config = Path.Combine(work.Path, "nuget.config");
        File.WriteAllText(config,
            $"""
            <?xml version="1.0" encoding="utf-8"?>
            <configuration>
              <packageSources>
                <clear />
                <add key="local" value="{feed}" />
              </packageSources>
            </configuration>
            """);
        var install = Dotnet(work.Path, Path.Combine(work.Path, "package-cache"),
            "tool", "install", "nffit", "--tool-path", tools, "--configfile", config, "--version", NffitApp.Version);
        Assert.True(install.Code == 0, "dotnet tool install failed:\n" + install.Out + install.Err);
        var nffit = Path.Combine(tools, OperatingSystem.IsWindows() ? "nffit.exe" : "nffit");

        var version = Run(nffit, work.Path, null, "--version");
        Assert.Equal(0, version.Code);
        Assert.Equal($"nffit {NffitApp.Version} (commit unknown)", version.Out.Trim());

        var manifest = Path.Combine(root, "datasets", "demo-stirrer", "manifest.csv");
        var toolJson = work.File("tool.json");
        var inProcessJson = work.File("in-process.json");
        var tool = Run(nffit, work.Path, null, "analyze", manifest, "--json", toolJson);
        var inProcess = CliTestHost.Run("analyze", manifest, "--json", inProcessJson);

        Assert.True(tool.Code == 0, "installed nffit failed:\n" + tool.Err);
        Assert.Equal(0, inProcess.Code);
        Assert.Equal(File.ReadAllBytes(inProcessJson), File.ReadAllBytes(toolJson));
        Assert.Equal(inProcess.Out, tool.Out);
    }

    private static void CopySources(string root, string target)
    {
        foreach (var file in new[] { "Directory.Build.props", "Directory.Packages.props", "README.md", "LICENSE" })
        {
            Directory.CreateDirectory(target);
            File.Copy(Path.Combine(root, file), Path.Combine(target, file));
        }

        var src = Path.Combine(root, "src");
        foreach (var file in Directory.EnumerateFiles(src, "*", SearchOption.AllDirectories))
        {
            var relative = Path.GetRelativePath(src, file);
            var parts = relative.Split(Path.DirectorySeparatorChar);
            if (parts.Contains("bin") || parts.Contains("obj"))
            {
                continue;
            }

            var destination = Path.Combine(target, "src", relative);
            Directory.CreateDirectory(Path.GetDirectoryName(destination)!);
            File.Copy(file, destination);
        }
    }

    private static (int Code, string Out, string Err) Dotnet(string directory, string? packageCache, params string[] args) =>
        Run(Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") is { Length: > 0 } host ? host : "dotnet", directory, packageCache, args);

    private static (int Code, string Out, string Err) Run(string program, string directory, string? packageCache, params string[] args)
    {
        var start = new ProcessStartInfo(program)
        {
            WorkingDirectory = directory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        foreach (var arg in args)
        {
            start.ArgumentList.Add(arg);
        }

        // The test host runs under MSBuild/VSTest variables that must not leak into a separate build.
        foreach (var key in start.Environment.Keys.Where(k => k.StartsWith("MSBUILD", StringComparison.OrdinalIgnoreCase)).ToList())
        {
            start.Environment.Remove(key);
        }

        start.Environment["DOTNET_CLI_TELEMETRY_OPTOUT"] = "1";
        start.Environment["DOTNET_NOLOGO"] = "1";
        start.Environment["DOTNET_SKIP_FIRST_TIME_EXPERIENCE"] = "1";
        if (packageCache is not null)
        {
            start.Environment["NUGET_PACKAGES"] = packageCache;
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException("could not start " + program);
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(StepTimeout))
        {
            process.Kill(entireProcessTree: true);
            Assert.Fail($"{program} {string.Join(' ', args)} did not finish within {StepTimeout}");
        }

        return (process.ExitCode, stdout.Result, stderr.Result);
    }

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
