using System.Text.RegularExpressions;
using NormalFormFit.Reporting;
using NormalFormFit.Reporting.Html;

namespace NormalFormFit.Tests.Reporting;

public class HtmlReportTests
{
    private static readonly Lazy<string> Page = new(() =>
        HtmlReport.Build(DemoReport.Report, [.. DemoReport.Figures.Select(f => (f, f.Svg()))], new HtmlReportOptions { Source = "demo.csv", ToolVersion = "0.0-test" }));

    [Fact]
    public void Page_ReferencesNothingOutsideItself()
    {
        var html = Page.Value;

        Assert.Empty(ExternalReferences.Find(html));
        Assert.DoesNotContain("<script", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<link", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<img", html, StringComparison.OrdinalIgnoreCase);
    }

    [Fact]
    public void ExternalReferenceCheck_FlagsWhatABrowserWouldFetch()
    {
        // The check above must be able to fail: each of these makes a browser fetch (HTML Living Standard, CSS Values §4.5).
        Assert.Equal(["figure.png"], ExternalReferences.Find("<img src=\"figure.png\">"));
        Assert.Equal(["https://example.org/s.css"], ExternalReferences.Find("<link rel=\"stylesheet\" href=\"https://example.org/s.css\">"));
        Assert.Equal(["font.woff"], ExternalReferences.Find("<style>@font-face{src:url('font.woff')}</style>"));
        Assert.Equal(["other.svg#a"], ExternalReferences.Find("<use xlink:href=\"other.svg#a\"/>"));
        Assert.Empty(ExternalReferences.Find("<a href=\"#runs\">runs</a><rect clip-path=\"url(#c1)\"/><p style=\"background:url(data:image/png;base64,AA==)\">"));
    }

    [Fact]
    public void Page_PutsTheAnswerFirst_ThenFiguresRunsDiagnosticsMethodsAndCautions()
    {
        var html = Page.Value;
        var order = new[] { "id=\"answer\"", "id=\"figures\"", "id=\"runs\"", "id=\"diagnostics\"", "id=\"methods\"", "id=\"cautions\"" }
            .Select(id => html.IndexOf(id, StringComparison.Ordinal))
            .ToArray();

        Assert.DoesNotContain(-1, order);
        Assert.Equal(order.Order(), order);
    }

    [Fact]
    public void Page_StatesBothOnsetsWithIntervals_TheAgreementAndTheVerdict()
    {
        var html = Page.Value;
        var r = DemoReport.Report;

        Assert.Contains(ReportNumbers.WithError(r.FromBottleneck.Value, r.FromBottleneck.StandardError), html, StringComparison.Ordinal);
        Assert.Contains(ReportNumbers.WithError(r.FromPeriod.Value, r.FromPeriod.StandardError), html, StringComparison.Ordinal);
        Assert.Contains(ReportNumbers.Interval(r.FromBottleneck.Ci95, r.FromBottleneck.StandardError), html, StringComparison.Ordinal);
        Assert.Contains(ReportNumbers.Interval(r.FromPeriod.Ci95, r.FromPeriod.StandardError), html, StringComparison.Ordinal);
        Assert.Contains(r.Agreement.Consistent ? "The two routes agree" : "The two routes disagree", html, StringComparison.Ordinal);
        Assert.Contains("Kind of onset: " + WireNames.Of(r.Verdict.Kind), html, StringComparison.Ordinal);
    }

    [Fact]
    public void Page_CarriesTheCaution()
    {
        Assert.Contains(System.Net.WebUtility.HtmlEncode(TextReport.Caution), Page.Value, StringComparison.Ordinal);
    }

    [Fact]
    public void Page_InlinesEveryFigure_WithIdsUniqueAcrossThePage()
    {
        var html = Page.Value;

        Assert.Equal(DemoReport.Figures.Count, Regex.Count(html, "<svg[\\s>]"));

        // HTML Living Standard §3.2.6.1: an id must be unique in the document; clip paths of two figures must not collide.
        var ids = Regex.Matches(html, "\\sid=\"([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
        Assert.Equal(ids.Count, ids.Distinct(StringComparer.Ordinal).Count());

        // Every in-page reference points at an id that exists.
        var refs = Regex.Matches(html, "url\\(#([^)]+)\\)|href=\"#([^\"]+)\"").Select(m => m.Groups[1].Success ? m.Groups[1].Value : m.Groups[2].Value);
        Assert.All(refs, id => Assert.Contains(id, ids));
    }

    [Fact]
    public void Page_ListsEveryRun()
    {
        var html = Page.Value;
        var runsSection = html[html.IndexOf("id=\"runs\"", StringComparison.Ordinal)..html.IndexOf("id=\"diagnostics\"", StringComparison.Ordinal)];

        Assert.Equal(DemoReport.Report.Runs.Count, Regex.Count(runsSection, "<tr><td>"));
    }
}
