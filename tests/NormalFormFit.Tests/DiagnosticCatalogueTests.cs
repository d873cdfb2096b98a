using System.Text.RegularExpressions;
using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Reporting;

namespace NormalFormFit.Tests;

/// <summary>
/// docs/diagnostics.md lists every code a user can meet. The codes are collected from the source itself (every
/// <c>Diagnostic</c> created with a literal code, every run flag by its name, the failure codes), so a new code without an entry
/// fails here.
/// </summary>
public partial class DiagnosticCatalogueTests
{
    [Fact]
    public void EveryCodeInTheSource_IsListedInTheDiagnosticsPage()
    {
        var root = RepositoryRoot();
        var page = File.ReadAllText(Path.Combine(root, "docs", "diagnostics.md"));
        var codes = new SortedSet<string>(StringComparer.Ordinal);
        foreach (var file in Directory.EnumerateFiles(Path.Combine(root, "src"), "*.cs", SearchOption.AllDirectories))
        {
            var text = File.ReadAllText(file);
            foreach (Match m in LiteralCode().Matches(text))
            {
                codes.Add(m.Groups["code"].Value);
            }
        }

        foreach (var flag in Enum.GetValues<RunFlag>())
        {
            codes.Add(WireNames.Of(flag));
        }

        foreach (var type in new[] { typeof(InsufficientData), typeof(CompareFailures) })
        {
            foreach (var field in type.GetFields().Where(f => f.IsLiteral && f.FieldType == typeof(string)))
            {
                codes.Add((string)field.GetRawConstantValue()!);
            }
        }

        // Enough codes were found for the scan to mean something (there were 60 when this test was written).
        Assert.True(codes.Count >= 50, $"only {codes.Count} codes found: the scan of the source is broken");
        var missing = codes.Where(c => !page.Contains($"`{c}`", StringComparison.Ordinal)).ToList();
        Assert.True(missing.Count == 0, "codes missing from docs/diagnostics.md: " + string.Join(", ", missing));
    }

    private static string RepositoryRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "NormalFormFit.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException("the test runs outside the repository: NormalFormFit.sln not found above " + AppContext.BaseDirectory);
    }

    // new Diagnostic(Severity.X, "code" …), new(Severity.X, "code" …), Warn(file, "code" …), Info(file, "code" …),
    // ErrorCode = "code".
    [GeneratedRegex("(?:Severity\\.(?:Error|Warning|Info),[ ]*|(?:Warn|Info)\\(file,[ ]*|ErrorCode = )\"(?<code>[a-z0-9-]+)\"")]
    private static partial Regex LiteralCode();
}
