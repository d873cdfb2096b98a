using System.Xml.Linq;

namespace NormalFormFit.Tests.Architecture;

/// <summary>
/// The library's stages depend one way (docs in README, Layout): each namespace of src/NormalFormFit refers only to
/// namespaces earlier in <see cref="Order"/>; nothing in the library refers to the reporting library or the command
/// line, and the reporting library does not refer to the command line. Read from the source text, so a reference
/// against the order fails here before it can grow into a cycle.
/// </summary>
public class LayerOrderTests
{
    /// <summary>
    /// Rank of each namespace of the library: a file may refer to its own rank and lower ones. The root namespace's
    /// types (Diagnostic, Estimate) sit with Numerics at the bottom; Simulation uses Numerics and Ingest only.
    /// </summary>
    private static readonly Dictionary<string, int> Order = new(StringComparer.Ordinal)
    {
        ["NormalFormFit"] = 0,
        ["NormalFormFit.Numerics"] = 0,
        ["NormalFormFit.Ingest"] = 1,
        ["NormalFormFit.Simulation"] = 2,
        ["NormalFormFit.Smoothing"] = 3,
        ["NormalFormFit.Field"] = 4,
        ["NormalFormFit.Bottleneck"] = 5,
        ["NormalFormFit.Onset"] = 6,
        ["NormalFormFit.Scaling"] = 7,
        ["NormalFormFit.Analysis"] = 8,
        ["NormalFormFit.Compare"] = 9,
    };

    [Fact]
    public void LibraryFiles_ReferOnlyToTheirOwnOrEarlierLayers()
    {
        var wrong = References("src/NormalFormFit")
            .Where(r => Layer(r.Namespace) is { } from && Layer(r.Target) is { } to && Order[to] > Order[from])
            .ToList();

        Assert.True(wrong.Count == 0, "references against the layer order (" + OrderText() + "):\n" + string.Join('\n', wrong));
    }

    [Fact]
    public void LibraryFiles_AreAllInALayer_AndNeverReferToReportingOrTheCommandLine()
    {
        var files = Sources("src/NormalFormFit").ToList();
        var declared = SourceReferences.DeclaredTypes(Sources("src"));
        var outside = files.SelectMany(f => SourceReferences.Find(f.Path, f.Text, declared))
            .Where(r => Layer(r.Target) is null)
            .Select(r => r.ToString());
        var unplaced = files
            .Select(f => (f.Path, Namespace: SourceReferences.NamespaceOfFile(f.Text), Types: SourceReferences.DeclaresTypes(f.Text)))
            .Where(f => f.Namespace is null ? f.Types : Layer(f.Namespace) is null)
            .Select(f => f.Namespace is { } ns && (IsIn(ns, "NormalFormFit.Reporting") || IsIn(ns, "NormalFormFit.Cli"))
                ? $"{f.Path}: namespace '{ns}' belongs in src/NormalFormFit.Reporting or src/NormalFormFit.Cli, not in the library"
                : $"{f.Path}: namespace '{f.Namespace ?? "(none)"}' has no place in the layer order; add it to LayerOrderTests.Order");
        var problems = outside.Concat(unplaced).ToList();

        Assert.True(problems.Count == 0, string.Join('\n', problems));
    }

    [Fact]
    public void ReportingFiles_NeverReferToTheCommandLine()
    {
        var wrong = References("src/NormalFormFit.Reporting").Where(r => IsIn(r.Target, "NormalFormFit.Cli")).ToList();

        Assert.True(wrong.Count == 0, string.Join('\n', wrong));
    }

    [Fact]
    public void LibraryProject_ReferencesNoOtherProjectAndNoPlottingPackage()
    {
        var project = XDocument.Load(Path.Combine(RepoRoot(), "src", "NormalFormFit", "NormalFormFit.csproj"));
        var projects = project.Descendants("ProjectReference").Select(e => (string?)e.Attribute("Include")).ToList();
        var packages = project.Descendants("PackageReference").Select(e => (string?)e.Attribute("Include") ?? string.Empty).ToList();

        Assert.Empty(projects);
        Assert.DoesNotContain(packages, p => p.StartsWith("ScottPlot", StringComparison.Ordinal) || p.StartsWith("HarfBuzz", StringComparison.Ordinal) || p.StartsWith("SkiaSharp", StringComparison.Ordinal));
    }

    [Fact]
    public void Scanner_SeesUsingsFullAndShortQualifiedNames_ButNotCommentsOrStrings()
    {
        const string source = """
            using NormalFormFit.Smoothing;
            using static NormalFormFit.Onset.TrendFit;

            namespace NormalFormFit.Numerics;

            // NormalFormFit.Compare in a comment, and Analysis.OnsetAnalysis
            /* NormalFormFit.Scaling.ScalingFit */
            internal static class Example
            {
                private const string Text = "NormalFormFit.Compare.ModelComparer and Analysis.OnsetAnalysis";
                private const char Quote = '"';

                public static object A() => NormalFormFit.Field.PhaseField.Empty;

                public static string B(int n) => $"{n} runs, {Analysis.OnsetAnalysis.MinimumRuns} needed: {(n > 1 ? "many" : "one")}";

                public static string C() => @"verbatim ""NormalFormFit.Compare"" text" + Bottleneck.Relaxation.Name;
            }
            """;
        var declared = SourceReferences.DeclaredTypes(Sources("src"));

        var found = SourceReferences.Find("Example.cs", source, declared).Select(r => (r.Line, r.Target)).ToList();

        Assert.Equal(
            [
                (1, "NormalFormFit.Smoothing"),
                (2, "NormalFormFit.Onset"),
                (13, "NormalFormFit.Field"),
                (15, "NormalFormFit.Analysis"),
                (17, "NormalFormFit.Bottleneck"),
            ],
            found.Order().ToList());
    }

    private static string OrderText() => string.Join(" < ", Order.GroupBy(kv => kv.Value).OrderBy(g => g.Key).Select(g => string.Join(" = ", g.Select(kv => kv.Key))));

    /// <summary>The layer of a namespace: the longest entry of <see cref="Order"/> it is or lies in; null when none.</summary>
    private static string? Layer(string ns) =>
        Order.Keys.Where(k => IsIn(ns, k) && (k != "NormalFormFit" || ns == k)).OrderByDescending(k => k.Length).FirstOrDefault();

    private static bool IsIn(string ns, string outer) => ns == outer || ns.StartsWith(outer + ".", StringComparison.Ordinal);

    private static IEnumerable<SourceReference> References(string folder)
    {
        var declared = SourceReferences.DeclaredTypes(Sources("src"));
        return Sources(folder).SelectMany(f => SourceReferences.Find(f.Path, f.Text, declared));
    }

    /// <summary>The .cs files under a folder of the repository (build output left out), with paths relative to the repository.</summary>
    private static IEnumerable<(string Path, string Text)> Sources(string folder)
    {
        var root = RepoRoot();
        return Directory.EnumerateFiles(Path.Combine(root, folder), "*.cs", SearchOption.AllDirectories)
            .Select(p => Path.GetRelativePath(root, p).Replace('\\', '/'))
            .Where(p => !p.Split('/').Any(part => part is "bin" or "obj"))
            .Order(StringComparer.Ordinal)
            .Select(p => (p, File.ReadAllText(Path.Combine(root, p))));
    }

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "NormalFormFit.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("repository root not found");
    }
}
