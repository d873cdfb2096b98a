using System.Diagnostics;
using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;
using SkiaSharp;

namespace NormalFormFit.Tests.Reporting;

/// <summary>Headless Chromium (Debian's package, installed by .ci/install-browser).</summary>
internal static class Chromium
{
    public static string? Path { get; } = new[] { "/usr/bin/chromium", "/usr/bin/chromium-browser" }.FirstOrDefault(File.Exists);

    /// <summary>
    /// Opens <paramref name="page"/>, writes a screenshot, returns the page's console messages. Console messages
    /// come from <c>--enable-logging=stderr --v=0</c>, which copies every console entry of the page to stderr as
    /// "…:CONSOLE(line)] "message", source: …". That catches what a reader's browser would complain about (script
    /// errors, blocked content) in the same run as the screenshot; --dump-dom would need a second launch and
    /// shows the DOM, not errors.
    /// </summary>
    public static IReadOnlyList<string> Open(string page, string screenshot, int width, int height)
    {
        var profile = Directory.CreateTempSubdirectory("nffit-chromium-").FullName;
        try
        {
            var psi = new ProcessStartInfo(Path!)
            {
                RedirectStandardError = true,
                RedirectStandardOutput = true,
                UseShellExecute = false,
            };
            foreach (var a in new[]
            {
                "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
                "--disable-component-update", "--disable-sync", "--user-data-dir=" + profile, "--enable-logging=stderr", "--v=0",
                "--screenshot=" + screenshot, $"--window-size={width},{height}", new Uri(page).AbsoluteUri,
            })
            {
                psi.ArgumentList.Add(a);
            }

            using var p = Process.Start(psi)!;
            var stderr = p.StandardError.ReadToEndAsync();
            var stdout = p.StandardOutput.ReadToEndAsync();
            if (!p.WaitForExit(TimeSpan.FromSeconds(90)))
            {
                p.Kill(entireProcessTree: true);
                Assert.Fail("chromium did not finish within 90 s");
            }

            return [.. stderr.Result.Split('\n').Where(l => l.Contains(":CONSOLE", StringComparison.Ordinal))];
        }
        finally
        {
            Directory.Delete(profile, recursive: true);
        }
    }

    /// <summary>Share of dark pixels, distinct colours, and whether the bottleneck-route blue appears (every other pixel sampled).</summary>
    public static (double Dark, int Colours, bool Blue) Ink(SKBitmap bitmap)
    {
        long dark = 0, total = 0;
        var colours = new HashSet<uint>();
        var blue = false;
        for (var y = 0; y < bitmap.Height; y += 2)
        {
            for (var x = 0; x < bitmap.Width; x += 2)
            {
                var c = bitmap.GetPixel(x, y);
                total++;
                dark += c.Red + c.Green + c.Blue < 3 * 200 ? 1 : 0;
                colours.Add((uint)c);

                // Within 24 levels per channel of FigurePalette.Bottleneck (#1F5AA6): antialiasing shifts a few levels.
                blue |= Math.Abs(c.Red - 0x1F) < 24 && Math.Abs(c.Green - 0x5A) < 24 && Math.Abs(c.Blue - 0xA6) < 24;
            }
        }

        return (dark / (double)total, colours.Count, blue);
    }
}

/// <summary>Runs when Chromium is installed; skips only outside CI (under CI=true a missing browser fails).</summary>
public sealed class ChromiumFactAttribute : FactAttribute
{
    public ChromiumFactAttribute()
    {
        if (Chromium.Path is null && string.IsNullOrEmpty(Environment.GetEnvironmentVariable("CI")))
        {
            Skip = "chromium is not installed (run .ci/install-browser); under CI=true this test fails instead of skipping";
        }
    }
}

/// <summary>A theory that runs when Chromium is installed; skips only outside CI, like <see cref="ChromiumFactAttribute"/>.</summary>
public sealed class ChromiumTheoryAttribute : TheoryAttribute
{
    public ChromiumTheoryAttribute()
    {
        if (Chromium.Path is null && string.IsNullOrEmpty(Environment.GetEnvironmentVariable("CI")))
        {
            Skip = "chromium is not installed (run .ci/install-browser); under CI=true this test fails instead of skipping";
        }
    }
}

[Collection(DemoFolderGroup.Name)]
public class ChromiumReportTests(DemoFolder demo)
{
    [ChromiumFact]
    public void ReportPage_InHeadlessChromium_RendersSomethingAndLogsNoErrors()
    {
        Assert.True(Chromium.Path is not null, "chromium is required under CI=true: .ci/install-browser installs it");
        var shot = Path.Combine(demo.Root, "page.png");

        var console = Chromium.Open(Path.Combine(demo.Report, "report.html"), shot, 1200, 2400);

        Assert.Empty(console);
        using var bitmap = SKBitmap.Decode(shot);
        Assert.Equal(1200, bitmap.Width);

        // Not blank: text, tables and figures darken a few percent of the page and bring the palette's colours
        // (common practice, no source: a blank or error page is one colour, a text-only page has no blue).
        var (dark, colours, blue) = Chromium.Ink(bitmap);
        Assert.True(dark > 0.02, $"only {dark:P1} of the screenshot is ink");
        Assert.True(colours > 50, $"only {colours} distinct colours in the screenshot");
        Assert.True(blue, "no pixel of the bottleneck-route blue: the figures did not render");
    }

    [ChromiumFact]
    public void ConsoleCheck_CatchesAnErrorThePageLogs()
    {
        // The check above must be able to fail: a page that logs an error is caught.
        Assert.True(Chromium.Path is not null, "chromium is required under CI=true: .ci/install-browser installs it");
        var page = Path.Combine(demo.Root, "bad.html");
        File.WriteAllText(page, "<!DOCTYPE html><html><body><p>x</p><script>console.error('broken page')</script></body></html>");

        var console = Chromium.Open(page, Path.Combine(demo.Root, "bad.png"), 400, 300);

        Assert.Contains(console, l => l.Contains("broken page", StringComparison.Ordinal));
    }

    [ChromiumFact]
    public void EmbeddedFontSubset_RendersPixelForPixelAsTheWholeFont_AndTheCheckSeesMissingHintingReferences()
    {
        // The same text of the demo page, regular and bold at the page's sizes, three times in one screenshot: with the
        // whole DejaVu faces (the reference), with the subset faces the page embeds, and with a subset of the page's
        // characters alone, without HtmlReport.HintingReferences (the control: FreeType's auto-hinter then measures
        // other alignment zones, so some glyph edges must differ).
        Assert.True(Chromium.Path is not null, "chromium is required under CI=true: .ci/install-browser installs it");
        var page = HtmlReport.Build(DemoReport.Report, [.. DemoReport.Figures.Select(f => (f, f.Svg()))]);
        var text = WebUtility.HtmlDecode(Regex.Replace(Regex.Replace(page, "<style>.*?</style>", string.Empty, RegexOptions.Singleline), "<[^>]+>", "\n"));
        var lines = text.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Distinct().Take(45).ToList();
        var pageOnly = new SortedSet<int>(text.EnumerateRunes().SelectMany(r => new[] { r.Value, Rune.ToUpperInvariant(r).Value, Rune.ToLowerInvariant(r).Value }));
        var embedded = EmbeddedFontTests.EmbeddedFaces(page).ToDictionary(f => f.Bold, f => f.Bytes);
        var faces = new[]
        {
            (Family: "whole", Regular: FigureFonts.FontBytes(false), Bold: FigureFonts.FontBytes(true)),
            (Family: "subset", Regular: embedded[false], Bold: embedded[true]),
            (Family: "control", Regular: FontSubset.Subset(FigureFonts.FontBytes(false), pageOnly)!, Bold: FontSubset.Subset(FigureFonts.FontBytes(true), pageOnly)!),
        };
        const int block = 1000;
        var html = new StringBuilder("<!DOCTYPE html><html><head><meta charset=\"utf-8\"><style>html{overflow:hidden}body{margin:0;background:#fff;color:#1e1e24}");
        html.Append("div.b{position:absolute;box-sizing:border-box;left:0;width:1000px;height:").Append(block).Append("px;overflow:hidden;padding:8px}p{margin:0}");
        foreach (var (family, regular, bold) in faces)
        {
            html.Append("@font-face{font-family:").Append(family).Append(";src:url(data:font/ttf;base64,").Append(Convert.ToBase64String(regular)).Append(")}");
            html.Append("@font-face{font-family:").Append(family).Append(";font-weight:bold;src:url(data:font/ttf;base64,").Append(Convert.ToBase64String(bold)).Append(")}");
        }

        html.Append("</style></head><body>");
        for (var k = 0; k < faces.Length; k++)
        {
            html.Append("<div class=\"b\" style=\"top:").Append(k * block).Append("px;font-family:").Append(faces[k].Family).Append("\">");
            for (var i = 0; i < lines.Count; i++)
            {
                var style = (i % 4) switch { 0 => "font:bold 21px/1.5", 1 => "font:14px/1.5", 2 => "font:bold 13px/1.5", _ => "font:16px/1.5" };
                html.Append("<p style=\"").Append(style).Append(' ').Append(faces[k].Family).Append("\">").Append(WebUtility.HtmlEncode(lines[i])).Append("</p>");
            }

            html.Append("</div>");
        }

        var file = Path.Combine(demo.Root, "fonts.html");
        File.WriteAllText(file, html.Append("</body></html>").ToString());
        var shot = Path.Combine(demo.Root, "fonts.png");

        Assert.Empty(Chromium.Open(file, shot, 1000, faces.Length * block));
        using var bitmap = SKBitmap.Decode(shot);
        var (subsetDiffers, ink) = DifferingPixels(bitmap, block, 1);
        var (controlDiffers, _) = DifferingPixels(bitmap, block, 2);

        Assert.True(ink > 10_000, $"only {ink} ink pixels in the reference block");
        Assert.Equal(0, subsetDiffers);
        Assert.True(controlDiffers > 0, "the control rendered identically: the comparison cannot see hinting differences");
    }

    // Pixels of block k that differ from block 0, and the ink pixels of block 0.
    private static (int Differ, int Ink) DifferingPixels(SKBitmap bitmap, int block, int k)
    {
        int differ = 0, ink = 0;
        for (var y = 0; y < block; y++)
        {
            for (var x = 0; x < bitmap.Width; x++)
            {
                var a = bitmap.GetPixel(x, y);
                differ += a != bitmap.GetPixel(x, y + (k * block)) ? 1 : 0;
                ink += a.Red + a.Green + a.Blue < 3 * 200 ? 1 : 0;
            }
        }

        return (differ, ink);
    }
}
