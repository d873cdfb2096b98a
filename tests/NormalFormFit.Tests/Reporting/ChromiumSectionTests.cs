using NormalFormFit.Tests.Cli;
using SkiaSharp;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// The report's newer sections seen in a real browser, one at a time: a copy of report.html gets a style sheet that
/// shows only the section under test (everything else display:none), headless Chromium takes a screenshot, and the
/// section must add ink and colour over the same page with nothing shown. Run on the bundled tracker demo (positions:
/// recommended onset, next measurements, the orbit figure, the onsets close up).
/// </summary>
public class ChromiumSectionTests(ChromiumSectionTests.TrackerReportFolder report) : IClassFixture<ChromiumSectionTests.TrackerReportFolder>
{
    /// <summary>The tracker demo's report folder, made once for the class and deleted after it.</summary>
    public sealed class TrackerReportFolder : IDisposable
    {
        private readonly Lazy<string> folder = new(() =>
        {
            var dir = Path.Combine(Path.GetTempPath(), "nffit-sections-" + Guid.NewGuid().ToString("N"));
            var (code, _, err) = CliTestHost.Run("analyze", Path.Combine(RepoRoot(), "datasets", "demo-tracker", "manifest.csv"), "--out", dir, "--quiet");
            Assert.True(code == 0, err);
            return dir;
        });

        public string Folder => this.folder.Value;

        public void Dispose()
        {
            if (this.folder.IsValueCreated && Directory.Exists(this.folder.Value))
            {
                Directory.Delete(this.folder.Value, recursive: true);
            }
        }
    }

    [ChromiumFact]
    public void NothingShown_IsABlankPage_SoTheSectionChecksBelowCanFail()
    {
        Assert.True(Chromium.Path is not null, "chromium is required under CI=true: .ci/install-browser installs it");
        var (dark, colours) = Shot(null);
        Assert.True(dark < 0.001, $"{dark:P2} of a page with nothing shown is ink");
        Assert.True(colours < 4, $"{colours} colours on a page with nothing shown");
    }

    [ChromiumTheory]
    [InlineData("recommended", 0.004, 2)]
    [InlineData("next", 0.004, 2)]
    [InlineData("fig-orbits", 0.01, 40)]
    [InlineData("fig-onsets", 0.005, 20)]
    public void Section_InHeadlessChromium_ShowsInkAndColour(string id, double minInk, int minColours)
    {
        Assert.True(Chromium.Path is not null, "chromium is required under CI=true: .ci/install-browser installs it");
        var (dark, colours) = Shot(id);
        Assert.True(dark > minInk, $"section '{id}': only {dark:P2} of the screenshot is ink");
        Assert.True(colours > minColours, $"section '{id}': only {colours} distinct colours");
    }

    private (double Dark, int Colours) Shot(string? id)
    {
        var folder = report.Folder;
        var html = File.ReadAllText(Path.Combine(folder, "report.html"));
        Assert.Contains(id is null ? "<body" : $"id=\"{id}\"", html, StringComparison.Ordinal);

        // Hide every element that neither is the target, nor holds it, nor lies inside it (:has, Chromium 105+).
        var style = id is null
            ? "<style>body * { display: none !important; } body { background: #fff !important; }</style>"
            : $"<style>body *:not(#{id}):not(:has(#{id})):not(#{id} *) {{ display: none !important; }} body {{ background: #fff !important; }}</style>";
        var name = "only-" + (id ?? "nothing");
        var page = Path.Combine(folder, name + ".html");
        File.WriteAllText(page, html.Replace("</head>", style + "</head>", StringComparison.Ordinal));
        var shot = Path.Combine(folder, name + ".png");
        var console = Chromium.Open(page, shot, 1200, 1400);
        Assert.Empty(console);
        using var bitmap = SKBitmap.Decode(shot);
        var (dark, colours, _) = Chromium.Ink(bitmap);
        return (dark, colours);
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
