using System.Globalization;
using MathNet.Numerics.Distributions;
using NormalFormFit.Analysis;
using NormalFormFit.Field;
using NormalFormFit.Onset;
using ScottPlot;

namespace NormalFormFit.Reporting.Figures;

/// <summary>One figure of the report: a stable file stem, a title, a caption, and the plot that draws it.</summary>
/// <param name="Name">File stem, e.g. <c>field</c> (written as field.png and field.svg).</param>
/// <param name="Title">Heading.</param>
/// <param name="Caption">What is drawn and how to read it.</param>
/// <param name="Plot">The plot.</param>
public sealed record Figure(string Name, string Title, string Caption, Plot Plot)
{
    /// <summary>Pixel width of the rendered figure.</summary>
    public int Width { get; init; } = ReportFigures.DefaultWidth;

    /// <summary>Pixel height of the rendered figure.</summary>
    public int Height { get; init; } = ReportFigures.DefaultHeight;

    /// <summary>
    /// One figure renders at a time in the process: rendering from several threads at once (reports written in
    /// parallel) crashed the process in the native drawing library (a segfault in libSkiaSharp, seen in a test run).
    /// </summary>
    internal static readonly Lock RenderGate = new();

    /// <summary>PNG bytes.</summary>
    public byte[] Png()
    {
        lock (RenderGate)
        {
            return Plot.GetImageBytes(Width, Height, ImageFormat.Png);
        }
    }

    /// <summary>A standalone SVG document.</summary>
    /// <remarks>A viewBox is added so the drawing scales with its container (an HTML page, a slide).</remarks>
    public string Svg()
    {
        string svg;
        lock (RenderGate)
        {
            svg = Plot.GetSvgXml(Width, Height);
        }

        var at = svg.IndexOf("<svg ", StringComparison.Ordinal);
        return at < 0 || svg.Contains("viewBox", StringComparison.Ordinal)
            ? svg
            : svg.Insert(at + 5, string.Create(CultureInfo.InvariantCulture, $"viewBox=\"0 0 {Width} {Height}\" "));
    }
}

/// <summary>
/// The figures people judge the fits by: θ̇(θ) with bands and parabolas, both onset trends, the scaling law on
/// log–log axes, measured against predicted periods, and the residuals of the bottleneck fits.
/// </summary>
public static partial class ReportFigures
{
    /// <summary>Default width in pixels.</summary>
    public const int DefaultWidth = 960;

    /// <summary>Default height in pixels.</summary>
    public const int DefaultHeight = 600;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>All figures for the report, in reading order. Figures whose data are missing are left out.</summary>
    public static IReadOnlyList<Figure> Build(AnalysisReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        FigureFonts.Register();
        var figures = new List<Figure?>
        {
            Field(report),
            Trend(report, bottleneckRoute: true),
            Trend(report, bottleneckRoute: false),
            Onsets(report),
            ScalingLaw(report),
            Periods(report),
            Residuals(report),
            Orbits(report),
            SignalOrbits(report),
        };
        return [.. figures.OfType<Figure>()];
    }

    /// <summary>Label of the control parameter with its units.</summary>
    internal static string ParamLabel(AnalysisReport report)
    {
        var name = report.ParamName is { Length: > 0 } n ? $"{n} μ" : "control parameter μ";
        return report.ParamUnits is { Length: > 0 } u ? $"{name} ({u})" : name;
    }

    /// <summary>"μ = 1.05 V" for a legend: the value with the parameter's unit when known.</summary>
    internal static string ParamValue(AnalysisReport report, double value) =>
        "μ = " + G(value, 6) + (report.ParamUnits is { Length: > 0 } u ? " " + u : string.Empty);

    private static string Unit(string? unit) => unit is { Length: > 0 } u ? " " + u : string.Empty;

    /// <summary>The unit of time for "per …" (the unit, or "time unit" when unknown).</summary>
    internal static string TimeUnit(AnalysisReport report) => report.TimeUnit is { Length: > 0 } u ? u : "time unit";

    /// <summary>The unit of time for a period axis (the unit, or "time units" when unknown).</summary>
    internal static string TimeUnits(AnalysisReport report) => report.TimeUnit is { Length: > 0 } u ? u : "time units";

    /// <summary>Figure 1: θ̇(θ) of every run, 95% band, fitted parabola over the fit window.</summary>
    internal static Figure? Field(AnalysisReport report)
    {
        var runs = Ordered(report).Where(r => r.Field is not null).ToList();
        if (runs.Count == 0)
        {
            return null;
        }

        var plot = NewPlot("Phase velocity of every run", "phase θ (rad)", $"dθ/dt (rad per {TimeUnit(report)})");

        // Centre the view on the runs' bottleneck (circular mean of θ*), so the slow part sits mid-plot unbroken.
        var centre = BottleneckCentre(runs);
        for (var i = 0; i < runs.Count; i++)
        {
            var r = runs[i];
            var colour = FigurePalette.Run(i, runs.Count);
            var (xs, values) = FieldWithBand(plot, r.Field!, centre, colour);
            var line = plot.Add.ScatterLine(xs, values, colour);
            line.LineWidth = 1.6f;
            line.LegendText = ParamValue(report, r.Param);
        }

        // Parabolas last, so they are drawn over every field and listed last in the legend.
        for (var i = 0; i < runs.Count; i++)
        {
            if (runs[i].Bottleneck is { } b && double.IsFinite(b.A.Value) && double.IsFinite(b.B.Value))
            {
                var mid = centre + RevolutionBlocks.WrapSigned(b.Phase.Value - centre);
                var px = Grid(mid - b.HalfWidth, mid + b.HalfWidth, 41);
                var parabola = plot.Add.ScatterLine(px, px.Select(x => b.A.Value + (b.B.Value * (x - mid) * (x - mid))).ToArray(), FigurePalette.Ink);
                parabola.LineWidth = 2.2f;
                parabola.LinePattern = LinePattern.Dashed;
                if (i == 0)
                {
                    parabola.LegendText = "fitted a + b(θ−θ*)²";
                }
            }
        }

        plot.ShowLegend(Edge.Right);
        return new Figure("field", "Phase velocity θ̇(θ) and the bottleneck fits",
            "Each run's reconstructed phase velocity (line) with its pointwise 95% band from the block bootstrap over whole " +
            "revolutions (shaded), coloured from dark (lowest μ) to light (highest μ). Black dashes: the fitted normal form " +
            "a + b(θ−θ*)² over the window used for the fit. The phase axis is centred on the bottleneck.", plot);
    }

    /// <summary>The circular mean of the runs' bottleneck phases θ* (π when none has a bottleneck): the centre of the phase axes.</summary>
    private static double BottleneckCentre(IReadOnlyList<RunResult> runs)
    {
        var stars = runs.Where(r => r.Bottleneck is not null).Select(r => r.Bottleneck!.Phase.Value).ToList();
        return stars.Count > 0 ? Math.Atan2(stars.Sum(Math.Sin), stars.Sum(Math.Cos)) : Math.PI;
    }

    /// <summary>
    /// Draws a run's pointwise 95% band of θ̇(θ) (shaded) on a phase axis centred on <paramref name="centre"/>, and
    /// returns the bin phases in order with the field's values there, for the caller to draw as it likes.
    /// </summary>
    private static (double[] Phases, double[] Values) FieldWithBand(Plot plot, PhaseField field, double centre, Color colour)
    {
        var pts = Enumerable.Range(0, field.Centres.Length)
            .Where(j => double.IsFinite(field.Velocity[j]))
            .Select(j => (X: centre + RevolutionBlocks.WrapSigned(field.Centres[j] - centre), V: field.Velocity[j], S: field.StandardError[j]))
            .OrderBy(p => p.X)
            .ToArray();
        var xs = pts.Select(p => p.X).ToArray();
        var band = 1.96; // pointwise 95%: the bootstrap errors are close to normal with many revolutions.
        var fill = plot.Add.FillY(xs, [.. pts.Select(p => p.V - (band * Finite(p.S)))], [.. pts.Select(p => p.V + (band * Finite(p.S)))]);
        fill.FillColor = colour.WithAlpha(0.22);
        fill.LineWidth = 0;
        return (xs, [.. pts.Select(p => p.V)]);
    }

    /// <summary>Figures 2 and 3: a (or T⁻²) against μ, the fitted trend with its 95% band, both onset estimates.</summary>
    internal static Figure? Trend(AnalysisReport report, bool bottleneckRoute)
    {
        var estimate = bottleneckRoute ? report.FromBottleneck : report.FromPeriod;
        var pts = Ordered(report)
            .Select(r => bottleneckRoute
                ? (r.IsTurning && r.Bottleneck is { } b ? (Mu: r.Param, Y: b.A.Value, S: b.A.StandardError) : (Mu: r.Param, Y: double.NaN, S: double.NaN))
                : (r.IsTurning && r.Period is { } p && p.Measured.Value > 0
                    ? (Mu: r.Param, Y: 1 / (p.Measured.Value * p.Measured.Value), S: 2 * p.Measured.StandardError / Math.Pow(p.Measured.Value, 3))
                    : (Mu: r.Param, Y: double.NaN, S: double.NaN)))
            .Where(p => double.IsFinite(p.Y))
            .ToArray();
        if (pts.Length == 0)
        {
            return null;
        }

        var colour = bottleneckRoute ? FigurePalette.Bottleneck : FigurePalette.Period;
        var plot = bottleneckRoute
            ? NewPlot("Minimum speed a against the control parameter", ParamLabel(report), $"a (rad per {TimeUnit(report)})")
            : NewPlot("Inverse squared period against the control parameter", ParamLabel(report), $"T⁻² (per {TimeUnit(report)}²)");

        // x range: the data and both onset intervals where finite.
        var xs = pts.Select(p => p.Mu).ToList();
        foreach (var e in new[] { report.FromBottleneck, report.FromPeriod }.Where(e => e.IsAvailable))
        {
            xs.Add(e.Value);
            xs.AddRange(new[] { e.Ci95.Low, e.Ci95.High }.Where(double.IsFinite));
        }

        // Never let a wide onset interval squash the data: show at most one data span beyond the runs.
        var dataSpan = Math.Max(pts.Max(p => p.Mu) - pts.Min(p => p.Mu), 1e-12);
        var xMin = Math.Max(xs.Min(), pts.Min(p => p.Mu) - dataSpan);
        var xMax = Math.Min(xs.Max(), pts.Max(p => p.Mu) + dataSpan);
        var pad = 0.04 * Math.Max(xMax - xMin, 1e-12);

        if (estimate.Curve is { } trend)
        {
            // The chosen law on the route's scale; the square-root law exists only on the turning side of its μc.
            var q = trend.Scaled && trend.DegreesOfFreedom > 0 ? StudentT.InvCDF(0, 1, trend.DegreesOfFreedom, 0.975) : 1.959964;
            // Points crowd toward the onset on a log scale so that a square-root law reaches its zero visibly.
            var near = estimate.IsAvailable
                ? Enumerable.Range(0, 40).SelectMany(k => new[] { -1.0, 1.0 }.Select(sg => estimate.Value + (sg * (xMax - xMin + (2 * pad)) * Math.Pow(10, -k / 8.0))))
                    .Append(estimate.Value)
                : [];
            var gx = Grid(xMin - pad, xMax + pad, 200).Concat(near.Where(x => x >= xMin - pad && x <= xMax + pad)).Order()
                .Where(x => double.IsFinite(trend.Evaluate(x)) && double.IsFinite(trend.Variance(x))).ToArray();
            if (gx.Length > 1)
            {
                var fill = plot.Add.FillY(gx, gx.Select(x => trend.Evaluate(x) - (q * Math.Sqrt(trend.Variance(x)))).ToArray(),
                    gx.Select(x => trend.Evaluate(x) + (q * Math.Sqrt(trend.Variance(x)))).ToArray());
                fill.FillColor = colour.WithAlpha(0.18);
                fill.LineWidth = 0;
                fill.LegendText = "95% band of the trend";
                var line = plot.Add.ScatterLine(gx, gx.Select(trend.Evaluate).ToArray(), colour);
                line.LineWidth = 2;
                line.LegendText = trend.Description;
            }
        }

        var zero = plot.Add.HorizontalLine(0, 1, FigurePalette.Reference, LinePattern.Solid);
        zero.LineWidth = 1;

        var bars = plot.Add.ErrorBar(pts.Select(p => p.Mu).ToArray(), pts.Select(p => p.Y).ToArray(), pts.Select(p => Finite(p.S)).ToArray());
        bars.Color = FigurePalette.Ink;
        var marks = plot.Add.ScatterPoints(pts.Select(p => p.Mu).ToArray(), pts.Select(p => p.Y).ToArray(), FigurePalette.Ink);
        marks.MarkerSize = 8;
        marks.LegendText = bottleneckRoute ? "a per run (± 1 s.e.)" : "1/T² per run (± 1 s.e.)";

        // Both onsets on the zero line, where the trend crosses it, each with its 95% interval as a capped bar: open
        // diamonds and squares in the routes' colours, so they cannot be read as runs (filled black circles). The marks
        // first and the bars over them, this route's thick bar under the other's thin one, so no mark hides a bar.
        var yMax = pts.Max(p => p.Y + Finite(p.S));
        var yMin = Math.Min(0, pts.Min(p => p.Y - Finite(p.S)));
        var span = Math.Max(yMax - yMin, 1e-12);
        var own = bottleneckRoute ? report.FromBottleneck : report.FromPeriod;
        var other = bottleneckRoute ? report.FromPeriod : report.FromBottleneck;
        var drawnOwn = OnsetMark(plot, own, bottleneckRoute, report.ParamUnits, own: true);
        var drawnOther = OnsetMark(plot, other, !bottleneckRoute, report.ParamUnits, own: false);
        OnsetBar(plot, own, bottleneckRoute, 0.035 * span, xMin - pad, xMax + pad, own: true);
        OnsetBar(plot, other, !bottleneckRoute, 0.02 * span, xMin - pad, xMax + pad, own: false);
        var next = NextRunMarks(plot, report, estimate, xMin - pad, xMax + pad);

        // An interval narrower than its mark cannot be read off the bar: an inset note says so and where to read it.
        // Narrowness in pixels of this figure's data area, measured by laying the figure out once (axes, ticks, labels).
        plot.Axes.SetLimitsX(xMin - pad, xMax + pad);
        var dataArea = DataAreaWidth(plot);
        var narrow = new[] { (E: own, Bottleneck: bottleneckRoute, Size: OwnMarkSize), (E: other, Bottleneck: !bottleneckRoute, Size: OtherMarkSize) }
            .Where(o => o.E.IsAvailable && NarrowerThanMark(o.E.Ci95, xMax - xMin + (2 * pad), o.Size, dataArea))
            .ToList();
        if (narrow.Count > 0)
        {
            var note = plot.Add.Annotation(NarrowNote([.. narrow.Select(o => (o.E, o.Bottleneck))], report.ParamUnits),
                estimate.Curve is { } c && c.Slope(estimate.Value) < 0 ? Alignment.LowerLeft : Alignment.LowerRight);
            note.LabelFontSize = 12;
            note.LabelFontColor = FigurePalette.Ink;
            note.LabelBackgroundColor = Colors.White.WithAlpha(0.92);
            note.LabelBorderColor = FigurePalette.Reference;
        }

        plot.ShowLegend(Alignment.UpperLeft);
        var ownShape = bottleneckRoute ? "blue open diamond" : "amber open square";
        var otherShape = bottleneckRoute ? "amber open square" : "blue open diamond";
        var onsetText = (drawnOwn
                ? $"Where it crosses zero: the onset by the {(bottleneckRoute ? "bottleneck" : "period")} route ({ownShape} on the zero line, its 95% interval as a capped bar{(bottleneckRoute ? " by Fieller's theorem" : string.Empty)}, drawn over the mark). "
                : $"The {(bottleneckRoute ? "bottleneck" : "period")} route gave no onset, so none is drawn. ")
            + (drawnOther ? $"The onset by the {(bottleneckRoute ? "period" : "bottleneck")} route is drawn on the same line for comparison ({otherShape}, thinner bar). " : string.Empty)
            + (narrow.Count > 0
                ? $"The 95% interval of the {string.Join(" and of the ", narrow.Select(o => o.Bottleneck ? "bottleneck route" : "period route"))} is narrower than its mark at this scale, as the note in the corner says; the legend and the onsets close up give it. "
                : string.Empty)
            + (next ? "Black open circles: where the next runs would shrink this route's interval most (see Next measurements)." : string.Empty);
        onsetText = onsetText.TrimEnd();
        return bottleneckRoute
            ? new Figure("trend-a", "Onset by the bottleneck route (a → 0)",
                "The minimum speed a of each run (black dots, ± 1 standard error) against μ, the weighted trend with its 95% band. " + onsetText, plot)
            : new Figure("trend-period", "Onset by the period route (T⁻² → 0)",
                "1/T² of each run (black dots, ± 1 standard error) against μ, the fitted law with its 95% band. The law is a weighted " +
                "polynomial in μ, or T = α(μ−μc)^−½ + β (the bottleneck passage plus a constant excursion time) drawn as 1/T², " +
                "whichever AICc prefers" + (estimate.Curve is { } law ? "; here the " + law.Description : string.Empty) + ". " + onsetText, plot);
    }

    /// <summary>
    /// Marks the suggested next runs of <paramref name="estimate"/>'s route at the trend's value there; true when any
    /// was drawn.
    /// </summary>
    private static bool NextRunMarks(Plot plot, AnalysisReport report, OnsetEstimate estimate, double xMin, double xMax)
    {
        if (estimate.Curve is not { } curve)
        {
            return false;
        }

        var drawn = false;
        foreach (var m in report.NextMeasurements.Where(m => m.Route == estimate.Route && m.Param >= xMin && m.Param <= xMax))
        {
            var y = curve.Evaluate(m.Param);
            if (!double.IsFinite(y))
            {
                continue;
            }

            var mark = plot.Add.Marker(m.Param, y, MarkerShape.OpenCircle, 18, FigurePalette.Ink);
            mark.LineWidth = 2;
            mark.LegendText = $"next runs: {m.Runs} at μ = {NextRunWording.Param(m, report)}{Unit(report.ParamUnits)}";
            drawn = true;
        }

        return drawn;
    }

    /// <summary>
    /// The onsets close up: the recommended onset and each route's, one row each, with their 95% intervals on a μ axis
    /// just wide enough for them, so that bars hidden under the marks of the trend figures can be read. Null without
    /// any onset.
    /// </summary>
    internal static Figure? Onsets(AnalysisReport report)
    {
        var rec = report.Recommended;
        var rows = new List<(string Label, double Value, double Se, Interval Ci, Color Colour, MarkerShape Shape)>();
        if (rec.IsAvailable)
        {
            rows.Add(($"recommended ({WireNames.Of(rec.Basis)})", rec.Value, rec.StandardError, rec.Ci95, FigurePalette.Ink, MarkerShape.FilledDiamond));
        }

        foreach (var (e, bottleneck) in new[] { (report.FromBottleneck, true), (report.FromPeriod, false) })
        {
            if (e.IsAvailable)
            {
                rows.Add((bottleneck ? "bottleneck route" : "period route", e.Value, e.StandardError, e.Ci95,
                    bottleneck ? FigurePalette.Bottleneck : FigurePalette.Period, bottleneck ? MarkerShape.OpenDiamond : MarkerShape.OpenSquare));
            }
        }

        if (rows.Count == 0)
        {
            return null;
        }

        // x range: every finite bound and value, padded by a tenth; an unbounded side runs to the edge.
        var finite = rows.SelectMany(r => new[] { r.Value, r.Ci.Low, r.Ci.High }).Where(double.IsFinite).ToList();
        var lo = finite.Min();
        var hi = finite.Max();
        var width = hi - lo > 0 ? hi - lo : Math.Max(Math.Abs(lo) * 1e-6, 1e-12);
        var xMin = lo - (0.12 * width);
        var xMax = hi + (0.12 * width);
        var plot = NewPlot("The onsets close up", ParamLabel(report), string.Empty);
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        for (var i = 0; i < rows.Count; i++)
        {
            var (label, value, se, ci, colour, shape) = rows[i];
            var y = rows.Count - i;
            var l = double.IsFinite(ci.Low) ? ci.Low : xMin;
            var h = double.IsFinite(ci.High) ? ci.High : xMax;
            var bar = plot.Add.Line(l, y, h, y);
            bar.Color = colour;
            bar.LineWidth = 4;
            foreach (var (x, bounded) in new[] { (l, double.IsFinite(ci.Low)), (h, double.IsFinite(ci.High)) })
            {
                if (bounded)
                {
                    var c = plot.Add.Line(x, y - 0.15, x, y + 0.15);
                    c.Color = colour;
                    c.LineWidth = 2.5f;
                }
            }

            var mark = plot.Add.Marker(value, y, shape, 16, colour);
            mark.LineWidth = 2.5f;
            mark.LegendText = $"{label}: {ReportNumbers.WithError(value, se)}{Unit(report.ParamUnits)}, 95% {ReportNumbers.Interval(ci, se)}{Unit(report.ParamUnits)}";
            ticks.AddMajor(y, label);
        }

        plot.Axes.Left.TickGenerator = ticks;
        plot.Axes.SetLimits(xMin, xMax, 0.4, rows.Count + 0.6 + (0.45 * rows.Count));
        plot.ShowLegend(Alignment.UpperCenter);
        plot.Grid.YAxisStyle.MajorLineStyle.Width = 0;
        return new Figure("onsets", "The onsets close up",
            "Each onset reported, one row each, with its 95% interval as a capped bar on a μ axis just wide enough for them: " +
            (rec.IsAvailable ? "the recommended onset (black filled diamond), " : "no recommended onset (" + rec.Reason + "), ") +
            string.Join(" and ", new[] { (report.FromBottleneck.IsAvailable, "the bottleneck route (blue open diamond)"), (report.FromPeriod.IsAvailable, "the period route (amber open square)") }
                .Where(x => x.IsAvailable).Select(x => x.Item2).DefaultIfEmpty("neither route")) + ". " +
            "An interval whose bound the data do not give runs to the edge without a cap.", plot)
        {
            Height = 300 + (40 * rows.Count),
        };
    }

    /// <summary>Figure 4: log T against log(μ − μc) with the fitted law and the reference slope −½.</summary>
    internal static Figure? ScalingLaw(AnalysisReport report)
    {
        if (report.Scaling is not { } s || !double.IsFinite(s.Onset.Value))
        {
            return null;
        }

        var pts = Ordered(report)
            .Where(r => r.IsTurning && r.Period is { } p && p.Measured.Value > 0 && Math.Abs(r.Param - s.Onset.Value) > 0)
            .Select(r => (D: Math.Abs(r.Param - s.Onset.Value), T: r.Period!.Measured.Value, S: r.Period.Measured.StandardError))
            .ToArray();
        if (pts.Length == 0)
        {
            return null;
        }

        var plot = NewPlot("Scaling of the period near onset", $"|μ − μc| ({UnitsOr(report, "parameter units")}, log scale)", $"period T ({TimeUnits(report)}, log scale)");
        var lx = pts.Select(p => Math.Log10(p.D)).ToArray();
        var ly = pts.Select(p => Math.Log10(p.T)).ToArray();
        var ls = pts.Select(p => Finite(p.S) / (p.T * Math.Log(10))).ToArray();
        var gx = Grid(lx.Min() - 0.1, lx.Max() + 0.1, 100);

        // Reference slope −½ through the weighted centroid: the best line of that slope (weights 1/σ² in log T).
        var w = ls.Select(v => v > 0 ? 1 / (v * v) : 1).ToArray();
        var c = Enumerable.Range(0, lx.Length).Sum(i => w[i] * (ly[i] + (0.5 * lx[i]))) / w.Sum();
        var reference = plot.Add.ScatterLine(gx, gx.Select(x => c - (0.5 * x)).ToArray(), FigurePalette.Reference);
        reference.LinePattern = LinePattern.Dotted;
        reference.LineWidth = 2.5f;
        reference.LegendText = "slope −½ (saddle-node on the circle)";

        if (s.HasCurve)
        {
            var fit = plot.Add.ScatterLine(gx, gx.Select(x => Math.Log10(s.PeriodAt(s.Onset.Value + Math.Pow(10, x)))).ToArray(), FigurePalette.Period);
            fit.LineWidth = 2;
            fit.LegendText = string.Create(Inv, $"fitted law, β = {ReportNumbers.Rounded(s.Exponent.Value, Math.Min(s.Exponent.StandardError, 0.01))}{(s.Form == NormalFormFit.Scaling.ScalingForm.PowerLawWithOffset ? " (with offset T₀)" : s.Form == NormalFormFit.Scaling.ScalingForm.PowerLawOfQuadraticRate ? " (rate d + κd²)" : s.LogModel.Count > 2 ? " (with correction terms)" : string.Empty)}");
        }

        var bars = plot.Add.ErrorBar(lx, ly, ls);
        bars.Color = FigurePalette.Ink;
        var marks = plot.Add.ScatterPoints(lx, ly, FigurePalette.Ink);
        marks.MarkerSize = 8;
        marks.LegendText = "measured period (± 1 s.e.)";

        LogAxis(plot.Axes.Bottom, gx[0], gx[^1]);
        LogAxis(plot.Axes.Left, Math.Min(ly.Min(), ly.Max()) - 0.1, ly.Max() + 0.1);
        plot.ShowLegend(Alignment.UpperRight);
        return new Figure("scaling", "Scaling law of the period",
            $"Measured periods (black dots, ± 1 standard error) against the distance |μ − μc| on logarithmic axes. Here μc = {ReportNumbers.WithError(s.Onset.Value, s.Onset.StandardError)}{Unit(report.ParamUnits)} " +
            "is fitted together with the exponent β by the scaling law itself; it only places the runs on this figure and is not one " +
            "of the reported onsets (the Answer gives the onset to act on). " +
            "Amber: the fitted law (with its correction terms when the information criterion kept them). Grey dots: the reference " +
            "slope −½ of a saddle-node on the circle, placed at its best height. " + report.Verdict.Evidence + ".", plot);
    }

    /// <summary>Figure 5: measured period and the two predictions, per run.</summary>
    internal static Figure? Periods(AnalysisReport report)
    {
        var runs = Ordered(report).Where(r => r.IsTurning && r.Period is not null).ToList();
        if (runs.Count == 0)
        {
            return null;
        }

        var predicted = runs.Any(r => double.IsFinite(r.Period!.FromField.Value) || double.IsFinite(r.Period!.FromBottleneck.Value));
        var plot = NewPlot(predicted ? "Measured and predicted periods" : "Measured periods", ParamLabel(report), $"period T ({TimeUnits(report)})");
        var mu = runs.Select(r => r.Param).ToArray();
        var measured = runs.Select(r => r.Period!.Measured.Value).ToArray();
        var bars = plot.Add.ErrorBar(mu, measured, runs.Select(r => Finite(r.Period!.Measured.StandardError)).ToArray());
        bars.Color = FigurePalette.Ink;
        var m = plot.Add.ScatterPoints(mu, measured, FigurePalette.Ink);
        m.MarkerSize = 9;
        m.LegendText = "measured (± 1 s.e.)";

        var field = runs.Where(r => double.IsFinite(r.Period!.FromField.Value)).ToArray();
        if (field.Length > 0)
        {
            var f = plot.Add.Scatter(field.Select(r => r.Param).ToArray(), field.Select(r => r.Period!.FromField.Value).ToArray(), FigurePalette.Period);
            f.MarkerShape = MarkerShape.OpenTriangleUp;
            f.MarkerSize = 11;
            f.LineWidth = 1.5f;
            f.LinePattern = LinePattern.Dotted;
            f.LegendText = "∮dθ/(dθ/dt) from the field";
        }

        var neck = runs.Where(r => double.IsFinite(r.Period!.FromBottleneck.Value)).ToArray();
        if (neck.Length > 0)
        {
            var n = plot.Add.Scatter(neck.Select(r => r.Param).ToArray(), neck.Select(r => r.Period!.FromBottleneck.Value).ToArray(), FigurePalette.Bottleneck);
            n.MarkerShape = MarkerShape.OpenSquare;
            n.MarkerSize = 10;
            n.LineWidth = 1.5f;
            n.LinePattern = LinePattern.Dashed;
            n.LegendText = "π/√(ab) from the bottleneck";
        }

        plot.ShowLegend(Alignment.UpperRight);
        // The y range holds every value and every measured error bar whole.
        plot.Axes.SetLimitsY(0, 1.08 * runs.SelectMany(r => new[] { r.Period!.Measured.Value + Finite(r.Period.Measured.StandardError), r.Period.FromField.Value, r.Period.FromBottleneck.Value }).Where(double.IsFinite).DefaultIfEmpty(1).Max());
        var caption = "Black: the measured mean period of each run (± 1 standard error)." +
            (field.Length > 0 ? " Amber triangles: ∮dθ/(dθ/dt) from the reconstructed field, which should match the measurement within its error (a check on the field)." : string.Empty) +
            (neck.Length > 0 ? " Blue squares: π/√(ab) from the bottleneck alone, which approaches the measurement as the run nears onset." : string.Empty) +
            (field.Length == 0 && neck.Length == 0 ? $" No run has a reconstructed field ({PeriodsOnlySource(runs)} carry periods only), so there are no predictions to compare." : string.Empty);
        return new Figure("periods", field.Length + neck.Length > 0 ? "Measured against predicted periods" : "Measured periods", caption, plot);
    }

    /// <summary>What the runs without a field were recorded as: event times, events detected in a signal, or both.</summary>
    private static string PeriodsOnlySource(IReadOnlyList<RunResult> runs)
    {
        var signal = runs.Any(r => r.Events is not null);
        var events = runs.Any(r => r.Events is null);
        return (signal, events) switch
        {
            (true, false) => "events detected in a single signal",
            (true, true) => "event times and events detected in a signal",
            _ => "event times",
        };
    }

    /// <summary>Figure 6: binned residuals of every bottleneck fit across its window.</summary>
    internal static Figure? Residuals(AnalysisReport report)
    {
        var runs = Ordered(report).Where(r => r.Bottleneck is { Residuals.Count: > 0 }).ToList();
        if (runs.Count == 0)
        {
            return null;
        }

        var plot = NewPlot("Residuals of the bottleneck fits", "θ − θ* (rad)", $"dθ/dt − (a + b(θ−θ*)²) (rad per {TimeUnit(report)})");
        var zero = plot.Add.HorizontalLine(0, 1, FigurePalette.Reference, LinePattern.Solid);
        zero.LineWidth = 1;
        var shapes = new[] { MarkerShape.FilledCircle, MarkerShape.FilledSquare, MarkerShape.FilledTriangleUp, MarkerShape.FilledDiamond, MarkerShape.OpenCircle, MarkerShape.OpenSquare };
        for (var i = 0; i < runs.Count; i++)
        {
            var res = runs[i].Bottleneck!.Residuals;
            var colour = FigurePalette.Run(i, runs.Count);
            var x = res.Select(b => b.Offset).ToArray();
            var y = res.Select(b => b.Residual).ToArray();
            var bars = plot.Add.ErrorBar(x, y, res.Select(b => Finite(b.StandardError)).ToArray());
            bars.Color = colour;
            var sc = plot.Add.Scatter(x, y, colour);
            sc.MarkerShape = shapes[i % shapes.Length];
            sc.MarkerSize = 7;
            sc.LineWidth = 1;
            sc.LegendText = ParamValue(report, runs[i].Param);
        }

        plot.ShowLegend(Edge.Right);
        return new Figure("residuals", "Residuals of the bottleneck fits",
            "For each run, the time-weighted mean of dθ/dt − (a + b(θ−θ*)²) in bins across the fit window (± 1 standard error " +
            "from the spread over revolutions). A good fit scatters about zero; a systematic U or W shape means the window is " +
            "too wide for a parabola.", plot);
    }

    /// <summary>Size in pixels of the mark of the figure's own route's onset.</summary>
    internal const int OwnMarkSize = 16;

    /// <summary>Size in pixels of the mark of the other route's onset.</summary>
    internal const int OtherMarkSize = 12;

    /// <summary>
    /// Width in pixels of <paramref name="plot"/>'s data area at the default size: the plot is laid out and drawn
    /// once (under the one-render-at-a-time gate) and the library's last layout read back.
    /// </summary>
    internal static double DataAreaWidth(Plot plot)
    {
        lock (Figure.RenderGate)
        {
            using var image = plot.GetImage(DefaultWidth, DefaultHeight);
            return plot.RenderManager.LastRender.DataRect.Width;
        }
    }

    /// <summary>
    /// True when the interval drawn on an axis <paramref name="axisWidth"/> wide, over a data area
    /// <paramref name="dataAreaPixels"/> pixels wide, spans fewer pixels than a mark of <paramref name="markSize"/>
    /// pixels, so the mark covers it (an unbounded interval is never narrow).
    /// </summary>
    internal static bool NarrowerThanMark(Interval ci, double axisWidth, int markSize, double dataAreaPixels) =>
        double.IsFinite(ci.Low) && double.IsFinite(ci.High) && axisWidth > 0
        && (ci.High - ci.Low) / axisWidth * dataAreaPixels < markSize;

    private static string NarrowNote(IReadOnlyList<(OnsetEstimate E, bool Bottleneck)> narrow, string? unit) =>
        (narrow.Count > 1 ? "95% intervals narrower than their marks:\n" : "95% interval narrower than its mark:\n") + string.Join("\n", narrow.Select(o =>
            $"{(o.Bottleneck ? "bottleneck route" : "period route")} {ReportNumbers.Interval(o.E.Ci95, o.E.StandardError)}{Unit(unit)}"))
        + "\n(see the onsets close up)";

    /// <summary>An onset's open mark on the zero line, with its value and interval in the legend; false when the route gave no onset.</summary>
    private static bool OnsetMark(Plot plot, OnsetEstimate e, bool bottleneckRoute, string? unit, bool own)
    {
        if (!e.IsAvailable)
        {
            return false;
        }

        var colour = bottleneckRoute ? FigurePalette.Bottleneck : FigurePalette.Period;
        var dot = plot.Add.Marker(e.Value, 0, bottleneckRoute ? MarkerShape.OpenDiamond : MarkerShape.OpenSquare, own ? OwnMarkSize : OtherMarkSize, colour);
        dot.LineWidth = own ? 2.5f : 1.8f;
        var label = bottleneckRoute ? "onset, bottleneck route" : "onset, period route";
        dot.LegendText = $"{label}: {ReportNumbers.WithError(e.Value, e.StandardError)}{Unit(unit)}, 95% {ReportNumbers.Interval(e.Ci95, e.StandardError)}{Unit(unit)}";
        return true;
    }

    /// <summary>
    /// An onset's 95% interval on the zero line as a bar with end caps (a bound the data do not give runs to the plot's
    /// edge, uncapped), added after the marks so that it is drawn over them.
    /// </summary>
    private static void OnsetBar(Plot plot, OnsetEstimate e, bool bottleneckRoute, double cap, double xMin, double xMax, bool own)
    {
        if (!e.IsAvailable)
        {
            return;
        }

        var colour = bottleneckRoute ? FigurePalette.Bottleneck : FigurePalette.Period;
        var lo = double.IsFinite(e.Ci95.Low) ? Math.Max(e.Ci95.Low, xMin) : xMin;
        var hi = double.IsFinite(e.Ci95.High) ? Math.Min(e.Ci95.High, xMax) : xMax;
        var bar = plot.Add.Line(lo, 0, hi, 0);
        bar.Color = colour;
        bar.LineWidth = own ? 5 : 2;
        foreach (var (x, bounded) in new[] { (lo, double.IsFinite(e.Ci95.Low) && e.Ci95.Low >= xMin), (hi, double.IsFinite(e.Ci95.High) && e.Ci95.High <= xMax) })
        {
            if (bounded)
            {
                var c = plot.Add.Line(x, -cap, x, cap);
                c.Color = colour;
                c.LineWidth = own ? 2.5f : 1.5f;
            }
        }
    }

    /// <summary>
    /// The orbits of runs recorded as positions, one small panel per run: the kept samples (at most
    /// <see cref="OrbitView.MaxDrawn"/>), the fitted ellipse, the positions dropped as off the orbit and the bottleneck.
    /// Each panel is centred on its ellipse and scaled by its semi-major axis, so the panels share one size; the
    /// ellipses' centres and axes in the recording's units are in the text summary. Null without such runs.
    /// </summary>
    internal static Figure? Orbits(AnalysisReport report)
    {
        var runs = Ordered(report).Where(r => r.OrbitView is not null).ToList();
        if (runs.Count == 0)
        {
            return null;
        }

        var cols = Math.Min(4, runs.Count);
        var rows = (runs.Count + cols - 1) / cols;
        const double cell = 2.7;
        var plot = NewPlot("Orbits of the positions", string.Empty, string.Empty);
        var anyRejected = false;
        var anyBottleneck = false;
        for (var i = 0; i < runs.Count; i++)
        {
            var v = runs[i].OrbitView!;
            var e = v.Ellipse;
            var ox = (i % cols) * cell;
            var oy = -(i / cols) * cell;
            var s = 1 / e.SemiMajor;
            var flip = v.YDown ? -1.0 : 1.0;
            double Px(double x) => ox + ((x - e.CentreX) * s);
            double Py(double y) => oy + (flip * (y - e.CentreY) * s);

            var ring = Grid(0, 2 * Math.PI, 181).Select(v.EllipsePoint).ToArray();
            var fit = plot.Add.ScatterLine(ring.Select(p => Px(p.X)).ToArray(), ring.Select(p => Py(p.Y)).ToArray(), FigurePalette.Bottleneck);
            fit.LineWidth = 1.5f;
            if (i == 0)
            {
                fit.LegendText = "fitted orbit (ellipse)";
            }

            var samples = plot.Add.ScatterPoints(v.X.Select(Px).ToArray(), v.Y.Select(Py).ToArray(), FigurePalette.Ink.WithAlpha(0.6));
            samples.MarkerSize = 3;
            if (i == 0)
            {
                samples.LegendText = "positions kept";
            }

            if (v.RejectedX.Length > 0)
            {
                // A position far off the orbit is drawn at its panel's edge, in its direction, so it stays in its own panel.
                var rx = v.RejectedX.Select(Px).Select(x => Math.Clamp(x, ox - 1.3, ox + 1.3)).ToArray();
                var ry = v.RejectedY.Select(Py).Select(y => Math.Clamp(y, oy - 1.15, oy + 1.3)).ToArray();
                var bad = plot.Add.ScatterPoints(rx, ry, FigurePalette.Rejected);
                bad.MarkerShape = MarkerShape.Eks;
                bad.MarkerSize = 8;
                bad.MarkerLineWidth = 1.8f;
                if (!anyRejected)
                {
                    bad.LegendText = "positions dropped as off the orbit";
                }

                anyRejected = true;
            }

            if (double.IsFinite(v.BottleneckX))
            {
                var neck = plot.Add.Marker(Px(v.BottleneckX), Py(v.BottleneckY), MarkerShape.FilledDiamond, 13, FigurePalette.Period);
                if (!anyBottleneck)
                {
                    neck.LegendText = "bottleneck θ*";
                }

                anyBottleneck = true;
            }

            var label = plot.Add.Text($"{ParamValue(report, runs[i].Param)}: {v.Samples} kept{(v.Rejected > 0 ? $", {v.Rejected} dropped" : string.Empty)}", ox, oy - 1.22);
            label.LabelFontSize = 12;
            label.LabelAlignment = Alignment.UpperCenter;
            label.LabelFontColor = FigurePalette.Ink;
        }

        var height = PanelLayout(plot, "Orbits of the positions", cols, rows, cell);
        var thinned = runs.Any(r => r.OrbitView!.Samples > OrbitView.MaxDrawn);
        return new Figure("orbits", "Orbits of the positions",
            "One panel per run recorded as positions, in order of μ, each centred on its fitted ellipse and scaled by its semi-major " +
            "axis (the centres and axes in the recording's units are in the text summary and report.json). Dark dots: the positions used" +
            (thinned ? $" (at most {OrbitView.MaxDrawn} drawn per run, evenly thinned)" : string.Empty) + "; blue: the fitted ellipse, whose " +
            "parametric angle is the phase" +
            (anyRejected ? "; red crosses: positions dropped as off the orbit (those beyond the panel drawn at its edge)" : string.Empty) +
            (anyBottleneck ? "; amber diamond: the bottleneck θ*, where the marker lingers" : string.Empty) +
            (runs.Any(r => r.OrbitView!.YDown) ? ". Image coordinates (y down) are drawn as the camera saw them." : "."), plot)
        {
            Height = height,
        };
    }

    /// <summary>
    /// Frameless square panels <paramref name="cell"/> apart, <paramref name="cols"/> × <paramref name="rows"/>, each
    /// spanning ±1.45 across and from −1.6 (room for its label) to +1.45; the legend in its own strip below the panels,
    /// outside the data area, so no panel hides it and it is never clipped. Returns the figure's height in pixels.
    /// </summary>
    private static int PanelLayout(Plot plot, string title, int cols, int rows, double cell)
    {
        plot.HideGrid();
        plot.Axes.Frameless();
        plot.Title(title); // Frameless hides the title panel too (ScottPlot 5 AxisManager.Frameless)
        plot.Axes.SquareUnits();
        plot.Axes.SetLimits(-1.45, ((cols - 1) * cell) + 1.45, -((rows - 1) * cell) - 1.6, 1.45);
        var legend = plot.ShowLegend(Edge.Bottom);
        legend.Alignment = Alignment.MiddleCenter;
        plot.Legend.Orientation = Orientation.Horizontal;
        // Square units: pixels per unit from the width, the height from the rows, plus the title and the legend strip.
        var perUnit = (DefaultWidth - 20) / (((cols - 1) * cell) + 2.9);
        return Math.Min(1400, 110 + (int)Math.Ceiling(perUnit * (((rows - 1) * cell) + 3.05)));
    }

    /// <summary>
    /// The delay-embedded orbits of single-signal runs whose protophase ran, one small panel per run: the samples used
    /// (at most <see cref="SignalOrbitView.MaxDrawn"/>), those of the cycles left out, the mean orbit the protophase
    /// runs along, the centre of the angle that orders it, and the bottleneck. Each panel is centred on the box of its
    /// samples and scaled by its half-width (both coordinates are the same signal, so one scale). Null without such runs.
    /// </summary>
    internal static Figure? SignalOrbits(AnalysisReport report)
    {
        var runs = Ordered(report).Where(r => r.SignalOrbitView is not null).ToList();
        if (runs.Count == 0)
        {
            return null;
        }

        var cols = Math.Min(4, runs.Count);
        var rows = (runs.Count + cols - 1) / cols;
        const double cell = 2.7;
        const string Title = "Delay-embedded orbits of the signal";
        var plot = NewPlot(Title, string.Empty, string.Empty);
        bool anyLeftOut = false, anyBottleneck = false;
        for (var i = 0; i < runs.Count; i++)
        {
            var v = runs[i].SignalOrbitView!;
            var ox = (i % cols) * cell;
            var oy = -(i / cols) * cell;
            var all = v.X.Concat(v.Y).Concat(v.LeftOutX).Concat(v.LeftOutY).Concat(v.MeanX).Where(double.IsFinite).ToArray();
            if (all.Length == 0)
            {
                continue;
            }

            var lo = all.Min();
            var hi = all.Max();
            var mid = (lo + hi) / 2;
            var s = hi > lo ? 2 / (hi - lo) : 1;
            double Px(double x) => ox + ((x - mid) * s);
            double Py(double y) => oy + ((y - mid) * s);

            var samples = plot.Add.ScatterPoints(v.X.Select(Px).ToArray(), v.Y.Select(Py).ToArray(), FigurePalette.Ink.WithAlpha(0.45));
            samples.MarkerSize = 2.5f;
            if (i == 0)
            {
                samples.LegendText = "samples used";
            }

            if (v.LeftOutX.Length > 0)
            {
                var bad = plot.Add.ScatterPoints(v.LeftOutX.Select(Px).ToArray(), v.LeftOutY.Select(Py).ToArray(), FigurePalette.Rejected.WithAlpha(0.8));
                bad.MarkerShape = MarkerShape.Eks;
                bad.MarkerSize = 5;
                bad.MarkerLineWidth = 1.2f;
                if (!anyLeftOut)
                {
                    bad.LegendText = "cycles left out";
                }

                anyLeftOut = true;
            }

            if (v.MeanX.Length > 1)
            {
                var mean = plot.Add.ScatterLine(v.MeanX.Select(Px).ToArray(), v.MeanY.Select(Py).ToArray(), FigurePalette.Bottleneck);
                mean.LineWidth = 2f;
                if (i == 0)
                {
                    mean.LegendText = "mean orbit (the protophase runs along it)";
                }
            }

            var centre = plot.Add.Marker(Px(v.CentreX), Py(v.CentreY), MarkerShape.Cross, 12, FigurePalette.Ink);
            centre.LineWidth = 2;
            if (i == 0)
            {
                centre.LegendText = "centre";
            }

            if (double.IsFinite(v.BottleneckX))
            {
                var neck = plot.Add.Marker(Px(v.BottleneckX), Py(v.BottleneckY), MarkerShape.FilledDiamond, 13, FigurePalette.Period);
                if (!anyBottleneck)
                {
                    neck.LegendText = "bottleneck θ*";
                }

                anyBottleneck = true;
            }

            var cycles = v.CyclesLeftOut > 0 ? $"{v.Cycles - v.CyclesLeftOut} of {v.Cycles} cycles" : $"{v.Cycles} cycles";
            var label = plot.Add.Text($"{ParamValue(report, runs[i].Param)}: {cycles}", ox, oy - 1.22);
            label.LabelFontSize = 12;
            label.LabelAlignment = Alignment.UpperCenter;
            label.LabelFontColor = FigurePalette.Ink;
        }

        var height = PanelLayout(plot, Title, cols, rows, cell);
        var signal = report.Runs.Select(r => r.Events?.Column).FirstOrDefault(c => c is not null) ?? "the signal";
        var unit = NormalFormFit.Ingest.ColumnNames.SplitParameterName(signal).Unit;
        var delays = runs.Select(r => ReportNumbers.Plain(r.SignalOrbitView!.Delay, 3)).Distinct().ToList();
        var rule = runs.Select(r => r.SignalOrbit?.DelayRule).FirstOrDefault(x => x is not null);
        var delay = (delays.Count == 1 ? $"{delays[0]} {TimeUnits(report)}" : $"{delays[0]} to {delays[^1]} {TimeUnits(report)}") + (rule is null ? string.Empty : $", {rule}");
        var thinned = runs.Any(r => r.SignalOrbitView!.Samples > SignalOrbitView.MaxDrawn || r.SignalOrbitView.LeftOut > SignalOrbitView.MaxDrawn);
        return new Figure("signal-orbits", Title,
            $"One panel per single-signal run whose protophase ran, in order of μ: the signal s = '{signal}' across against itself a delay " +
            $"earlier, s(t − {delay}), up, both in {(unit is { Length: > 0 } u ? u : "the signal's unit")}, each panel centred on " +
            "its samples and scaled to their range. Dark dots: the samples the protophase used" +
            (thinned ? $" (at most {SignalOrbitView.MaxDrawn} drawn per run, evenly thinned in time)" : string.Empty) +
            "; blue: the mean orbit, along which the protophase measures arc length" +
            (runs.Any(r => r.SignalOrbitView!.MeanX.Length == 0) ? $" " + string.Create(Inv, $"(not drawn where fewer than {SignalOrbitView.MinCoverage * 100:F0}% of its {SignalOrbitView.MeanBins} phase bins hold samples used)") : string.Empty) +
            "; black cross: the centre about which the angle orders the orbit" +
            (anyLeftOut ? "; red crosses: samples of the cycles left out because their protophase ran backwards or did not go once round" : string.Empty) +
            (anyBottleneck ? "; amber diamond: the bottleneck θ*, where the signal lingers before an event" : string.Empty) + ".", plot)
        {
            Height = height,
        };
    }

    /// <summary>Height in pixels of a legend row (the symbol's box, which sets the row).</summary>
    internal const float LegendRowHeight = 20;

    private static Plot NewPlot(string title, string x, string y)
    {
        var plot = new Plot();
        plot.Title(title, 17);
        plot.XLabel(x, 15);
        plot.YLabel(y, 15);
        plot.Axes.Title.Label.Bold = true;
        plot.Axes.Bottom.Label.Bold = true;
        plot.Axes.Left.Label.Bold = true;
        plot.Axes.Bottom.TickLabelStyle.FontSize = 13;
        plot.Axes.Left.TickLabelStyle.FontSize = 13;
        plot.Grid.MajorLineColor = Color.FromHex("#E4E4E8");
        plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { LabelFormatter = PlainTick };
        plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic { LabelFormatter = PlainTick };
        plot.Legend.FontSize = 12;
        // Rows at least as tall as a line of 12-px text: with the library's default row height the first entry's
        // ascenders stuck out above the legend's inner area and were cut off (ScottPlot 5.1.59, seen on every figure).
        plot.Legend.SymbolHeight = LegendRowHeight;
        return plot;
    }

    /// <summary>
    /// A tick label in plain notation (0.00009, not 9E-05): the value rounded to 12 significant digits to drop the
    /// tick generator's floating-point residue, then written as a decimal; scientific notation only beyond 10¹⁵.
    /// </summary>
    internal static string PlainTick(double v)
    {
        if (!double.IsFinite(v))
        {
            return string.Empty;
        }

        if (v == 0 || Math.Abs(v) < 1e-24)
        {
            return "0";
        }

        if (Math.Abs(v) >= 1e15)
        {
            return ReportNumbers.G(v, 6);
        }

        var rounded = decimal.Parse(v.ToString("G12", Inv), NumberStyles.Float, Inv);
        return rounded.ToString("0.############################", Inv).Replace("-", "−", StringComparison.Ordinal);
    }

    /// <summary>Ticks of a log₁₀ axis at 1, 2, 5 × 10ᵏ (labelled) and the other integers × 10ᵏ (minor).</summary>
    private static void LogAxis(IAxis axis, double log10Min, double log10Max)
    {
        var ticks = new ScottPlot.TickGenerators.NumericManual();
        for (var k = (int)Math.Floor(log10Min) - 1; k <= (int)Math.Ceiling(log10Max); k++)
        {
            for (var m = 1; m <= 9; m++)
            {
                var v = m * Math.Pow(10, k);
                var lv = Math.Log10(v);
                if (lv < log10Min - 0.3 || lv > log10Max + 0.3)
                {
                    continue;
                }

                if (m is 1 or 2 or 5)
                {
                    ticks.AddMajor(lv, ReportNumbers.G(v, 3));
                }
                else
                {
                    ticks.AddMinor(lv);
                }
            }
        }

        axis.TickGenerator = ticks;
    }

    private static IEnumerable<RunResult> Ordered(AnalysisReport report) => report.Runs.OrderBy(r => r.Param);

    private static double[] Grid(double lo, double hi, int n) => [.. Enumerable.Range(0, n).Select(i => lo + ((hi - lo) * i / (n - 1)))];

    private static double Finite(double x) => double.IsFinite(x) ? x : 0;

    private static string UnitsOr(AnalysisReport report, string fallback) => report.ParamUnits is { Length: > 0 } u ? u : fallback;

    private static string G(double x, int digits) => ReportNumbers.G(x, digits);
}
