using System.Globalization;
using System.Net;
using System.Text.RegularExpressions;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Reporting;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;
using NormalFormFit.Tests.Analysis;
using NormalFormFit.Tests.Cli;
using SkiaSharp;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// The page and the text read as a new user reads them: one recommended onset first, the routes as evidence, the
/// next measurements with the caution beside them, captions and method notes that name only what was drawn and what
/// ran, one vocabulary, and every diagnostic of the page in the text.
/// </summary>
public partial class ReportReadingTests
{
    private static string Page(AnalysisReport report) =>
        HtmlReport.Build(report, [.. ReportFigures.Build(report).Select(f => (f, f.Svg()))], new HtmlReportOptions { EmbedFont = false });

    private static string Text(string html) => WebUtility.HtmlDecode(Tags().Replace(html, " "));

    [Fact]
    public void Page_PutsTheRecommendedOnsetFirst_ThenTheRoutesAsEvidence()
    {
        var page = Page(DemoReport.Report);
        var rec = DemoReport.Report.Recommended;
        Assert.True(rec.IsAvailable);

        var recommended = page.IndexOf("id=\"recommended\"", StringComparison.Ordinal);
        var evidence = page.IndexOf("Evidence: the two routes", StringComparison.Ordinal);
        Assert.True(recommended > 0 && recommended < evidence, "the recommended onset must come before the routes");

        // The recommended value is shown with its unit, rounded to its standard error's second digit.
        var shown = Text(page[recommended..evidence]);
        Assert.Contains(ReportNumbers.WithError(rec.Value, rec.StandardError) + " mA", shown, StringComparison.Ordinal);
        Assert.Contains("Basis: " + WireNames.Of(rec.Basis), shown, StringComparison.Ordinal);
    }

    [Fact]
    public void Page_TablesTheNextMeasurements_WithTheCautionBesideThem_AndMarksThemOnTheTrends()
    {
        var report = DemoReport.Report;
        Assert.NotEmpty(report.NextMeasurements);
        var page = Page(report);
        var start = page.IndexOf("<section id=\"next\">", StringComparison.Ordinal);
        Assert.True(start > 0, "no Next measurements section");
        var section = page[start..page.IndexOf("</section>", start, StringComparison.Ordinal)];
        Assert.Equal(report.NextMeasurements.Count, Regex.Count(section, "<tr><td>"));
        Assert.Contains("class=\"caution\"", section, StringComparison.Ordinal);
        foreach (var m in report.NextMeasurements)
        {
            Assert.Contains(NextRunWording.Param(m, report) + " mA", Text(section), StringComparison.Ordinal);
            Assert.Contains(NextRunWording.Narrowing(m), Text(section), StringComparison.Ordinal);
        }

        // Marked on the trend figure of each suggested route, named in the legend.
        var trend = ReportFigures.Build(report).Single(f => f.Name == "trend-a");
        Assert.Contains("next runs:", trend.Svg(), StringComparison.Ordinal);
    }

    [Fact]
    public void TrendFigures_DrawTheOnsetsOnTheZeroLine()
    {
        // The marks sit at y = 0 (not above or below it, where they would read as runs): the plot's data point of each
        // onset mark is (μc, 0) exactly.
        var trend = ReportFigures.Trend(DemoReport.Report, bottleneckRoute: true)!;
        var marks = trend.Plot.GetPlottables().OfType<ScottPlot.Plottables.Marker>().Where(m => m.LegendText.StartsWith("onset", StringComparison.Ordinal)).ToList();
        Assert.Equal(2, marks.Count);
        Assert.All(marks, m => Assert.Equal(0, m.Location.Y));
        Assert.Contains(marks, m => m.Location.X == DemoReport.Report.FromBottleneck.Value);
        Assert.Contains(marks, m => m.Location.X == DemoReport.Report.FromPeriod.Value);
        Assert.DoesNotContain("field route", trend.Caption, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(9e-05, "0.00009")]
    [InlineData(0.00012000000000000002, "0.00012")]
    [InlineData(-0.02, "−0.02")]
    [InlineData(1.0000000001, "1.0000000001")]
    [InlineData(250000, "250000")]
    [InlineData(0, "0")]
    public void TickLabels_AreInPlainNotation(double value, string expected) =>
        Assert.Equal(expected, ReportFigures.PlainTick(value));

    [Fact]
    public void EventOnlyPage_SaysNothingOfFieldsBottlenecksOrSmoothing()
    {
        // Event times of the rotor θ̇ = μ − sin θ, whose period is 2π/√(μ² − 1) (Adler 1946), with 0.5% jitter.
        var rng = new Random(16);
        var runs = new[] { 1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2 }.Select(mu =>
        {
            var period = 2 * Math.PI / Math.Sqrt((mu * mu) - 1);
            var t = 0.0;
            var times = Enumerable.Range(0, 12).Select(_ => t += period * (1 + (0.005 * ((2 * rng.NextDouble()) - 1)))).ToArray();
            return EventRunAnalyzer.Analyze(new EventRecording($"ev{mu}.csv", times, [0]), mu, $"ev{mu}.csv");
        }).ToList();
        var report = OnsetAnalysis.Combine(runs, "mA") with { TimeUnit = "s" };
        var figures = ReportFigures.Build(report);
        var page = Page(report);
        var text = TextReport.Format(report);

        Assert.DoesNotContain(figures, f => f.Name is "field" or "trend-a" or "residuals");
        var captions = string.Join(" ", figures.Select(f => f.Caption));
        Assert.DoesNotContain("blue", captions, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("bottleneck route (blue", captions, StringComparison.Ordinal);
        var periods = figures.Single(f => f.Name == "periods");
        Assert.DoesNotContain("from the field", periods.Svg(), StringComparison.Ordinal);

        // Method notes: no smoothing ran, so no spline; the event times are described instead.
        var methods = Text(page[page.IndexOf("<section id=\"methods\">", StringComparison.Ordinal)..]);
        Assert.DoesNotContain("smoothing spline", methods, StringComparison.Ordinal);
        Assert.DoesNotContain("block bootstrap", methods, StringComparison.Ordinal);
        Assert.Contains("Event times", methods, StringComparison.Ordinal);

        // The recommended onset is the period route's, and says why.
        Assert.Equal(RecommendationBasis.Period, report.Recommended.Basis);
        Assert.Contains("bottleneck route gave no estimate", report.Recommended.Reason, StringComparison.Ordinal);

        // Every diagnostic the page lists is in the text too, with its code (the note explaining the missing route).
        foreach (var d in report.AllDiagnostics)
        {
            Assert.Contains(WebUtility.HtmlEncode(d.Code), page, StringComparison.Ordinal);
            Assert.Contains($"({d.Code})", text, StringComparison.Ordinal);
        }

        Assert.Contains("(bottleneck-not-available)", text, StringComparison.Ordinal);

        // The run tables have no columns of a field or a bottleneck fit that never ran, and the field file is not
        // promised; the period figure's caption names the law that was used.
        var runsTable = Text(page[page.IndexOf("<section id=\"runs\">", StringComparison.Ordinal)..page.IndexOf("<section id=\"diagnostics\">", StringComparison.Ordinal)]);
        Assert.DoesNotContain("θ* (rad)", runsTable, StringComparison.Ordinal);
        Assert.DoesNotContain("π/√(ab)", runsTable, StringComparison.Ordinal);
        Assert.DoesNotContain("field with its band is in field.csv", runsTable, StringComparison.Ordinal);
        Assert.Contains("T measured (s)", runsTable, StringComparison.Ordinal);
        var textTable = text.Split('\n').Single(l => l.TrimStart().StartsWith("param", StringComparison.Ordinal));
        Assert.DoesNotContain("θ*", textTable, StringComparison.Ordinal);
        Assert.DoesNotContain("∮dθ/θ̇", textTable, StringComparison.Ordinal);
        Assert.Contains("T meas", textTable, StringComparison.Ordinal);
        Assert.Contains("; here the " + report.FromPeriod.Curve!.Description, figures.Single(f => f.Name == "trend-period").Caption, StringComparison.Ordinal);

        // The method notes describe the one route that ran, and no agreement between routes.
        Assert.Contains("Onset, period route", methods, StringComparison.Ordinal);
        Assert.DoesNotContain("Onset, both routes", methods, StringComparison.Ordinal);
        Assert.DoesNotContain("Agreement", methods, StringComparison.Ordinal);
    }

    [Fact]
    public void PositionPage_HasAnOrbitPanelPerRun_WithTheRejectedPositionsAndTheBottleneck()
    {
        using var dir = CliTestHost.NewFolder();
        var runs = TrackerScenario.Simulate(revolutions: 6);
        var manifest = TrackerScenario.Write(dir.Path, runs);
        var outDir = dir.File("report");
        var (code, _, err) = CliTestHost.Run("analyze", manifest, "--out", outDir, "--quiet");
        Assert.True(code == 0, err);

        var page = File.ReadAllText(Path.Combine(outDir, "report.html"));
        Assert.Contains("id=\"fig-orbits\"", page, StringComparison.Ordinal);
        var svg = File.ReadAllText(Path.Combine(outDir, "orbits.svg"));
        foreach (var r in runs)
        {
            Assert.Contains("μ = " + r.Volts.ToString("G6", CultureInfo.InvariantCulture) + " V", svg, StringComparison.Ordinal);
        }

        Assert.Contains("positions dropped as off the orbit", svg, StringComparison.Ordinal);
        Assert.Contains("bottleneck θ*", svg, StringComparison.Ordinal);
        Assert.Contains("Positions to phase", page, StringComparison.Ordinal);

        // The figure is drawn: ink on a white canvas, the fitted orbit's blue and the rejected points' red both present.
        using var bitmap = SKBitmap.Decode(Path.Combine(outDir, "orbits.png"));
        bool Near(SKColor c, ScottPlot.Color p) => Math.Abs(c.Red - p.R) < 30 && Math.Abs(c.Green - p.G) < 30 && Math.Abs(c.Blue - p.B) < 30;
        var pixels = bitmap.Pixels;
        Assert.Contains(pixels, c => Near(c, FigurePalette.Bottleneck));
        Assert.Contains(pixels, c => Near(c, FigurePalette.Rejected));
        Assert.Contains(pixels, c => Near(c, FigurePalette.Period));
    }

    [GeneratedRegex("<[^>]+>")]
    private static partial Regex Tags();
}
