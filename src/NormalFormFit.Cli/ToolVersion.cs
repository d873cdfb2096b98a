using System.CommandLine;
using System.CommandLine.Invocation;
using System.Reflection;

namespace NormalFormFit.Cli;

/// <summary>
/// The one source of the tool's version: the package version (<c>Version</c> in Directory.Build.props), written into
/// every JSON report as <c>tool_version</c>, and the commit the build came from, which the SDK appends to the
/// informational version as <c>+SHA</c> when the source is a git checkout (SourceRevisionId) and leaves out otherwise.
/// </summary>
internal static class ToolVersion
{
    private static readonly string Informational =
        typeof(ToolVersion).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "0";

    /// <summary>The package version alone (no commit), e.g. <c>0.1.0</c>.</summary>
    public static string Package => Split(Informational).Package;

    /// <summary>The full commit id the build came from, or null when it was built outside a git checkout.</summary>
    public static string? Commit => Split(Informational).Commit;

    /// <summary>The line <c>nffit --version</c> prints.</summary>
    public static string Line => Describe(Informational);

    /// <summary>Splits an informational version <c>VERSION[+COMMIT]</c> into its two parts.</summary>
    public static (string Package, string? Commit) Split(string informational)
    {
        var plus = informational.IndexOf('+', StringComparison.Ordinal);
        return plus < 0
            ? (informational, null)
            : (informational[..plus], plus + 1 < informational.Length ? informational[(plus + 1)..] : null);
    }

    /// <summary><c>nffit 0.1.0 (commit 9f43d82…)</c>, or <c>(commit unknown)</c> when the build had none.</summary>
    public static string Describe(string informational)
    {
        var (package, commit) = Split(informational);
        return $"nffit {package} (commit {commit ?? "unknown"})";
    }

    /// <summary>Makes the root command's <c>--version</c> print <see cref="Line"/> instead of the bare attribute.</summary>
    public static void Install(RootCommand root, TextWriter stdout)
    {
        foreach (var option in root.Options)
        {
            if (option is VersionOption version)
            {
                version.Action = new PrintLine(stdout);
            }
        }
    }

    private sealed class PrintLine(TextWriter stdout) : SynchronousCommandLineAction
    {
        public override int Invoke(ParseResult parseResult)
        {
            stdout.WriteLine(Line);
            return ExitCodes.Ok;
        }
    }
}
