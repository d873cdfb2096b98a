using System.Net;
using System.Text.Json;
using System.Text.RegularExpressions;
using NormalFormFit.Compare;
using NormalFormFit.Reporting;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// The model comparison as a reader meets it on the page, in the text and in model.json: the caution beside the
/// model's onset (as the analysis has it beside the next measurements), the parameter's unit, and numbers with the
/// digits their standard errors support (rounded to the error's second significant digit: common practice, no
/// source). The comparison is set by hand (its numbers invented), so that the formatting, not a fit, is under test.
/// </summary>
public partial class ComparisonPageTests
{
    private static readonly ModelComparison Comparison = new(
        "mu - sin(theta)",
        [],
        new FittedParameter("c0", 0.0239585, 0.2303, false) { Bias = -0.02401 },
        new FittedParameter("c1", 0.977905, 0.2233, false) { Bias = 0.02213 },
        new Estimate(0.998888, 0.0043589),
        new Interval(0.9897306, 1.008046),
        6581.6,
        7.6318e8,
        0.5,
        true,
        889,
        [new RunMisfit("run-06.csv", 1.15, 60, 0.0076, 60, 0.0476, -5.8e-5)],
        [new RegionMisfit(3.93, 4.71, 120, 77.8, 120, 0.58)],
        [new RunMisfit("run-06.csv", 1.15, 60, 0.0076, 60, 0.0476, -5.8e-5)],
        [new RegionMisfit(3.93, 4.71, 120, 77.8, 120, 0.58)],
        [])
    {
        ReplicateStatistics = [1.29e10, 2.1e5, 3.3e4],
    };

    private static string ModelSection()
    {
        var report = DemoReport.Report;
        var page = HtmlReport.Build(report, [], new HtmlReportOptions { EmbedFont = false }, Comparison);
        var start = page.IndexOf("<section id=\"model\">", StringComparison.Ordinal);
        Assert.True(start > 0, "no model section");
        return page[start..page.IndexOf("</section>", start, StringComparison.Ordinal)];
    }

    [Fact]
    public void Page_PutsTheCautionBesideTheModelsOnset()
    {
        var section = ModelSection();
        var onset = section.IndexOf("model's onset μ_lab", StringComparison.Ordinal);
        var caution = section.IndexOf("class=\"caution\"", StringComparison.Ordinal);
        var worst = section.IndexOf("Where the model fits worst", StringComparison.Ordinal);
        Assert.True(onset > 0 && caution > onset && caution < worst, "the caution must follow the model's onset, before the misfit table");
        Assert.Contains(WebUtility.HtmlEncode(TextReport.Caution), section, StringComparison.Ordinal);
    }

    [Fact]
    public void Page_ShowsTheOnsetWithItsUnit_AndNumbersWithTheDigitsTheirErrorsSupport()
    {
        var text = WebUtility.HtmlDecode(Tags().Replace(ModelSection(), " "));
        Assert.Contains("0.9989 ± 0.0044 mA", text, StringComparison.Ordinal);
        Assert.Contains("[0.9897, 1.0080] mA", text, StringComparison.Ordinal);
        Assert.Contains("0.02 ± 0.23", text, StringComparison.Ordinal);
        Assert.Contains("(μ = 1.15 mA)", text, StringComparison.Ordinal);
        Assert.DoesNotContain("0.0239585", text, StringComparison.Ordinal);
        Assert.DoesNotContain("E+", text, StringComparison.Ordinal);
        Assert.Contains("7.632×10⁸", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Text_ShowsTheOnsetWithItsUnit_AndNoComputerNotation()
    {
        var text = ComparisonText.Format(Comparison, "mA");
        Assert.Contains("μ_lab = 0.9989 ± 0.0044 mA   95% [0.9897, 1.0080] mA", text, StringComparison.Ordinal);
        Assert.Contains("μ = 1.15 mA", text, StringComparison.Ordinal);
        Assert.DoesNotContain("0.0239585", text, StringComparison.Ordinal);
        Assert.DoesNotContain("E+", text, StringComparison.Ordinal);
        Assert.DoesNotContain("E-", text, StringComparison.Ordinal);
        Assert.Contains(TextReport.Caution, text, StringComparison.Ordinal);
    }

    [Fact]
    public void Json_CarriesTheUnitsAndTheCaution()
    {
        using var stream = new MemoryStream();
        ComparisonJson.Write(Comparison, stream, "test", "mA", "s");
        using var doc = JsonDocument.Parse(stream.ToArray());
        var model = doc.RootElement.GetProperty("model");
        Assert.Equal("mA", model.GetProperty("units").GetProperty("param").GetString());
        Assert.Equal("s", model.GetProperty("units").GetProperty("time").GetString());
        Assert.Equal(TextReport.Caution, model.GetProperty("caution").GetString());

        using var none = new MemoryStream();
        ComparisonJson.Write(Comparison, none);
        using var doc2 = JsonDocument.Parse(none.ToArray());
        Assert.Equal(JsonValueKind.Null, doc2.RootElement.GetProperty("model").GetProperty("units").GetProperty("param").ValueKind);
    }

    [Fact]
    public void ModelFigure_DrawsTheModelInItsOwnColour_ListedAfterTheRuns_OnTheFieldFiguresPhaseAxis()
    {
        var report = DemoReport.Report;
        var figure = ReportFigures.Model(report, Comparison)!;
        var labelled = figure.Plot.GetPlottables().OfType<ScottPlot.Plottables.Scatter>().Where(p => p.LegendText.Length > 0).ToList();
        var runs = labelled.Where(p => p.LegendText.StartsWith("μ = ", StringComparison.Ordinal)).ToList();
        var model = labelled.Single(p => p.LegendText.StartsWith("fitted model", StringComparison.Ordinal));

        // Its own colour: not the ink of the runs' ramp (the darkest run's navy is close to ink) nor any run's colour.
        Assert.Equal(FigurePalette.Model, model.Color);
        Assert.All(runs, r => Assert.NotEqual(r.Color, model.Color));
        Assert.NotEqual(FigurePalette.Ink, model.Color);
        Assert.Equal(ScottPlot.LinePattern.Dashed, model.LinePattern);

        // Listed after every μ entry, not between them.
        Assert.Equal(labelled.Count - 1, labelled.IndexOf(model));

        // The same phase axis as the field figure (both centred on the runs' bottleneck).
        var field = ReportFigures.Field(report)!;
        _ = figure.Png();
        _ = field.Png();
        var a = figure.Plot.Axes.GetLimits();
        var b = field.Plot.Axes.GetLimits();
        Assert.Equal(b.Left, a.Left, 1);
        Assert.Equal(b.Right, a.Right, 1);
    }

    [Theory]
    [InlineData(7.6318e8, 4, "7.632×10⁸")]
    [InlineData(1.29e10, 3, "1.29×10¹⁰")]
    [InlineData(9.9e-5, 2, "0.000099")] // plain from 10⁻⁶ (docs/glossary.md, Numbers)
    [InlineData(9.9e-7, 2, "9.9×10⁻⁷")]
    [InlineData(0.648, 3, "0.648")]
    [InlineData(6581.6, 4, "6582")]
    [InlineData(9.9999e8, 3, "1×10⁹")]
    public void PlainNumbers_WriteLargeAndSmallValuesAsPowersOfTen(double x, int digits, string expected) =>
        Assert.Equal(expected, ReportNumbers.Plain(x, digits));

    [GeneratedRegex("<[^>]+>")]
    private static partial Regex Tags();
}
