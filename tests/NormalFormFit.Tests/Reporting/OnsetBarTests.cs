using NormalFormFit.Analysis;
using NormalFormFit.Onset;
using NormalFormFit.Reporting.Figures;
using ScottPlot;
using SkiaSharp;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// The onsets on the trend figures sit on the zero line with their 95% intervals as capped bars that no mark hides:
/// read off the rendered pixels of the figure. The intervals are set by hand on the demo report (a figure's
/// drawing, not an estimate, is under test), so the bars' extents are known exactly.
/// </summary>
public class OnsetBarTests
{
    private static readonly Interval Wide = new(-0.02, 0.012);

    /// <summary>The demo report with the figure's own route given <paramref name="ownCi"/> (relative to its value) and the
    /// other route's onset moved into the middle of that interval, where its mark lies over the bar; no next-run marks.</summary>
    private static AnalysisReport WithIntervals(bool bottleneckRoute, Interval ownCi)
    {
        var r = DemoReport.Report;
        var own = bottleneckRoute ? r.FromBottleneck : r.FromPeriod;
        var other = bottleneckRoute ? r.FromPeriod : r.FromBottleneck;
        var ownSet = own with { Ci95 = new Interval(own.Value + ownCi.Low, own.Value + ownCi.High) };
        var otherValue = own.Value + (0.35 * ownCi.Low);
        var otherSet = other with { Value = otherValue, StandardError = 0.002, Ci95 = new Interval(otherValue - 0.004, otherValue + 0.004) };
        return r with
        {
            FromBottleneck = bottleneckRoute ? ownSet : otherSet,
            FromPeriod = bottleneckRoute ? otherSet : ownSet,
            NextMeasurements = [],
        };
    }

    private static bool Near(SKColor c, Color p) => Math.Abs(c.Red - p.R) < 40 && Math.Abs(c.Green - p.G) < 40 && Math.Abs(c.Blue - p.B) < 40;

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void AWideInterval_IsABarInTheRoutesColour_OverEveryColumnItSpans_EvenUnderTheOtherRoutesMark(bool bottleneckRoute)
    {
        var report = WithIntervals(bottleneckRoute, Wide);
        var own = bottleneckRoute ? report.FromBottleneck : report.FromPeriod;
        var other = bottleneckRoute ? report.FromPeriod : report.FromBottleneck;
        var colour = bottleneckRoute ? FigurePalette.Bottleneck : FigurePalette.Period;
        var figure = ReportFigures.Trend(report, bottleneckRoute)!;
        using var bitmap = SKBitmap.Decode(figure.Png());

        // Pixel positions of the bar's ends and of the other route's mark, from the plot's last render.
        var lo = figure.Plot.GetPixel(new Coordinates(own.Ci95.Low, 0));
        var hi = figure.Plot.GetPixel(new Coordinates(own.Ci95.High, 0));
        var otherMark = figure.Plot.GetPixel(new Coordinates(other.Value, 0));
        var y0 = (int)Math.Round(lo.Y);
        Assert.True(hi.X - lo.X > 60, $"the test needs a bar wider than the marks (it spans {hi.X - lo.X:F0} px)");
        Assert.InRange(otherMark.X, lo.X + 10, hi.X - 10);

        // Every column between the caps shows the route's colour on the zero line (±2 px, the bar is 5 px thick):
        // were the bar drawn under the other route's mark, the mark's edges would cover it there. Only the other
        // route's end caps, drawn over every bar so that its interval stays readable too, may cover it.
        var otherCaps = new[] { other.Ci95.Low, other.Ci95.High }.Select(x => figure.Plot.GetPixel(new Coordinates(x, 0)).X).ToArray();
        Assert.All(otherCaps, c => Assert.True(Math.Abs(c - otherMark.X) > 8, "the other route's caps must lie outside its mark"));
        var missing = new List<int>();
        for (var x = (int)Math.Ceiling(lo.X) + 2; x <= (int)Math.Floor(hi.X) - 2; x++)
        {
            if (otherCaps.Any(c => Math.Abs(x - c) <= 2.5))
            {
                continue;
            }

            if (!Enumerable.Range(y0 - 2, 5).Any(y => Near(bitmap.GetPixel(x, y), colour)))
            {
                missing.Add(x);
            }
        }

        Assert.True(missing.Count == 0, $"bar hidden at columns {string.Join(", ", missing)} (other mark at x = {otherMark.X:F0})");

        // The caps stand above the bar at both ends, taller than the bar is thick.
        foreach (var end in new[] { lo, hi })
        {
            var x = (int)Math.Round(end.X);
            Assert.True(Enumerable.Range(x - 1, 3).Any(xx => Enumerable.Range(y0 - 7, 3).All(y => Near(bitmap.GetPixel(xx, y), colour))),
                $"no cap at x = {x}");
        }

        // A wide bar needs no note.
        Assert.DoesNotContain("narrower than", figure.Svg(), StringComparison.Ordinal);
        Assert.DoesNotContain("narrower than its mark", figure.Caption, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void AnIntervalNarrowerThanItsMark_IsSaidSoInAnInsetNoteAndTheCaption(bool bottleneckRoute)
    {
        var report = WithIntervals(bottleneckRoute, new Interval(-1e-5, 1e-5));
        var own = bottleneckRoute ? report.FromBottleneck : report.FromPeriod;
        var figure = ReportFigures.Trend(report, bottleneckRoute)!;
        using var bitmap = SKBitmap.Decode(figure.Png());
        var lo = figure.Plot.GetPixel(new Coordinates(own.Ci95.Low, 0));
        var hi = figure.Plot.GetPixel(new Coordinates(own.Ci95.High, 0));
        Assert.True(hi.X - lo.X < ReportFigures.OwnMarkSize, "the test needs a bar narrower than its mark");

        var svg = figure.Svg();
        Assert.Contains("narrower than", svg, StringComparison.Ordinal);
        Assert.Contains(bottleneckRoute ? "bottleneck route [" : "period route [", svg, StringComparison.Ordinal);
        Assert.Contains("narrower than its mark", figure.Caption, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(0.0, 0.05, 16, false)] // 0.05 of an 800 px data area: 40 px, wider than a 16 px mark
    [InlineData(0.0, 0.01, 16, true)] // 8 px
    [InlineData(0.0, 0.01, 6, false)] // wider than a 6 px mark
    [InlineData(double.NegativeInfinity, 0.0, 16, false)] // unbounded: drawn to the edge, never narrow
    public void NarrownessIsJudgedInPixelsOfTheDataArea(double low, double high, int markSize, bool narrow) =>
        Assert.Equal(narrow, ReportFigures.NarrowerThanMark(new Interval(low, high), 1.0, markSize, 800));

    [Fact]
    public void TheDataAreaIsMeasuredOnTheFigure_NotAssumed()
    {
        // The demo's trend figure at 960 × 600: the data area is what the layout leaves, less than the figure's width,
        // and it is the span the axis limits map onto (GetPixel after a render).
        var figure = ReportFigures.Trend(DemoReport.Report, bottleneckRoute: true)!;
        var width = ReportFigures.DataAreaWidth(figure.Plot);
        var limits = figure.Plot.Axes.GetLimits();
        var span = figure.Plot.GetPixel(new Coordinates(limits.Right, 0)).X - figure.Plot.GetPixel(new Coordinates(limits.Left, 0)).X;
        Assert.InRange(width, 500, ReportFigures.DefaultWidth - 20);
        Assert.Equal(span, width, 1.0);
    }
}
