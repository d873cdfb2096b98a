using System.Globalization;
using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Onset;
using NormalFormFit.Reporting.Figures;
using static NormalFormFit.Reporting.ReportNumbers;

namespace NormalFormFit.Reporting.Html;

/// <summary>What the page says about where it came from.</summary>
public sealed record HtmlReportOptions
{
    /// <summary>Name of the manifest analysed, shown in the heading.</summary>
    public string? Source { get; init; }

    /// <summary>Version of the tool, shown in the heading.</summary>
    public string? ToolVersion { get; init; }

    /// <summary>
    /// Embed the figures' typeface so the page looks the same without it installed: only the glyphs the page uses
    /// (tens of kB), or the whole of both faces (about 2 MB) where the font subsetter is not available.
    /// </summary>
    public bool EmbedFont { get; init; } = true;

    /// <summary>Defaults.</summary>
    public static HtmlReportOptions Default { get; } = new();
}

/// <summary>
/// One self-contained HTML page: the answer first, then the figures (inline SVG), the per-run table, the
/// diagnostics, the method notes with their sources and the cautions. Styles are inline; nothing is fetched.
/// </summary>
public static partial class HtmlReport
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>Builds the page from the report and its figures (SVG text in the same order as the figures).</summary>
    /// <param name="report">The analysis.</param>
    /// <param name="figures">Rendered figures, in reading order.</param>
    /// <param name="options">What the page says about its source.</param>
    /// <param name="model">A model comparison of the same runs; when given, the page gains a section on it.</param>
    public static string Build(AnalysisReport report, IReadOnlyList<(Figure Figure, string Svg)> figures, HtmlReportOptions? options = null, ModelComparison? model = null)
    {
        ArgumentNullException.ThrowIfNull(report);
        ArgumentNullException.ThrowIfNull(figures);
        options ??= HtmlReportOptions.Default;
        var sb = new StringBuilder();
        sb.Append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
        sb.Append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
        sb.Append("<title>Onset report").Append(options.Source is null ? string.Empty : " — " + E(options.Source)).Append("</title>\n");
        sb.Append("<style>\n");
        var fontAt = sb.Length;
        sb.Append(Style);
        sb.Append("</style>\n</head>\n<body>\n<main>\n");

        sb.Append("<header><h1>Onset report</h1><p class=\"meta\">");
        var meta = new List<string>();
        if (options.Source is not null)
        {
            meta.Add("manifest " + E(options.Source));
        }

        meta.Add(string.Create(Inv, $"{report.Runs.Count} runs ({report.Runs.Count(r => r.IsTurning)} turning)"));
        if (report.ParamUnits is not null)
        {
            meta.Add("μ in " + E(report.ParamUnits));
        }

        if (report.TimeUnit is not null)
        {
            meta.Add("time in " + E(report.TimeUnit));
        }

        if (options.ToolVersion is not null)
        {
            meta.Add("nffit " + E(options.ToolVersion));
        }

        sb.Append(string.Join(" · ", meta)).Append("</p></header>\n");

        Answer(sb, report);
        if (model is not null)
        {
            Model(sb, model, figures.Select(f => f.Figure.Name).ToList(), report.ParamUnits is { Length: > 0 } pu ? " " + E(pu) : string.Empty);
        }

        NextMeasurements(sb, report, figures.Select(f => f.Figure.Name).ToList());
        Figures(sb, figures, report);
        Runs(sb, report);
        Diagnostics(sb, report);
        Methods(sb, report);
        sb.Append("<section id=\"cautions\"><h2>Cautions</h2><p class=\"caution\">").Append(E(TextReport.Caution)).Append("</p>");
        sb.Append("<p>The intervals are statistical: they assume the runs are steady, the control parameter is set as recorded, ")
          .Append("and the onset is approached along the same path as the runs. They do not cover drifts, hysteresis or effects ")
          .Append("outside the measured range.</p></section>\n");
        sb.Append("</main>\n</body>\n</html>\n");
        if (options.EmbedFont)
        {
            var used = UsedCodePoints(sb.ToString());
            sb.Insert(fontAt, FontFace(bold: false, used) + FontFace(bold: true, used));
        }

        return sb.ToString();
    }

    private static void Answer(StringBuilder sb, AnalysisReport report)
    {
        var u = report.ParamUnits is { Length: > 0 } units ? " " + E(units) : string.Empty;
        sb.Append("<section id=\"answer\"><h2>Answer</h2>\n");
        Recommended(sb, report.Recommended, u);
        sb.Append("<h3>Evidence: the two routes</h3>\n<table class=\"answer\">\n<thead><tr><th>onset μc</th><th>value ± s.e.</th>")
          .Append("<th>95% interval</th><th>runs</th><th>trend</th></tr></thead>\n<tbody>\n");
        OnsetRow(sb, "bottleneck route (a → 0)", report.FromBottleneck, u, "route-bottleneck");
        OnsetRow(sb, "period route (T⁻² → 0)", report.FromPeriod, u, "route-period");
        sb.Append("</tbody></table>\n");

        var ag = report.Agreement;
        if (!double.IsFinite(ag.Z))
        {
            sb.Append("<p class=\"verdict unknown\"><strong>Agreement:</strong> not available (one route gave no estimate).</p>\n");
        }
        else if (ag.Consistent)
        {
            sb.Append(string.Create(Inv, $"<p class=\"verdict good\"><strong>The two routes agree</strong>: z = {ag.Z:F2} (|z| ≤ 2).</p>\n"));
        }
        else
        {
            sb.Append(string.Create(Inv, $"<p class=\"verdict bad\"><strong>The two routes disagree</strong>: z = {ag.Z:F2} (|z| &gt; 2). Most likely: {E(ag.Reason ?? "unknown")}.</p>\n"));
        }

        if (report.Scaling is not null)
        {
            var kind = report.Verdict.Kind == Scaling.OnsetKind.SaddleNodeOnCircle ? "good" : "unknown";
            sb.Append("<p class=\"verdict ").Append(kind).Append("\"><strong>Kind of onset: ").Append(E(WireNames.Of(report.Verdict.Kind))).Append("</strong>. ")
              .Append(E(Capitalise(report.Verdict.Evidence))).Append(".</p>\n");
        }
        else
        {
            sb.Append("<p class=\"verdict unknown\"><strong>Kind of onset:</strong> undetermined — the scaling law needs at least four runs with timed periods.</p>\n");
        }

        var warnings = report.AllDiagnostics.Count(d => d.Severity == Severity.Warning);
        if (warnings > 0)
        {
            sb.Append(string.Create(Inv, $"<p class=\"note\">{warnings} warning(s) qualify these results: see <a href=\"#diagnostics\">Diagnostics</a>.</p>\n"));
        }

        sb.Append("</section>\n");
    }

    private static void Model(StringBuilder sb, ModelComparison c, IReadOnlyList<string> figureNames, string units)
    {
        sb.Append("<section id=\"model\"><h2>Reduced model</h2>\n<p>dθ/dt = <code>").Append(E(c.Expression))
          .Append("</code>, with μ = c0 + c1·μ_lab, fitted to the runs' fields and periods.</p>\n");
        var replicates = c.ReplicateStatistics.Count + c.FailedReplicates;
        var largest = c.ReplicateStatistics.Count > 0 ? c.ReplicateStatistics.Max() : double.NaN;
        sb.Append("<p class=\"verdict ").Append(c.Consistent ? "good" : "bad").Append("\"><strong>")
          .Append(c.Consistent ? "Consistent with the data" : "Rejected by the data").Append("</strong>: ")
          .Append(string.Create(Inv, $"misfit Q = {Plain(c.Statistic, 4)} against {replicates} run sets simulated from the fitted model (mean {Plain(c.Expected, 4)}, largest {Plain(largest, 3)}); p = {G(c.PValue, 2)}."))
          .Append("</p>\n");
        sb.Append("<table class=\"answer\">\n<thead><tr><th>parameter</th><th>value ± s.e.</th><th>95% interval</th><th>bias removed</th></tr></thead>\n<tbody>\n");
        foreach (var p in c.Parameters.Append(c.Offset).Append(c.Scale))
        {
            sb.Append("<tr><th scope=\"row\">").Append(E(p.Name)).Append("</th>");
            if (p.Fixed)
            {
                sb.Append("<td class=\"num\">").Append(G(p.Value)).Append("</td><td colspan=\"2\">held at this value</td></tr>\n");
                continue;
            }

            sb.Append("<td class=\"num\">").Append(WithError(p.Value, p.StandardError)).Append("</td>")
              .Append("<td class=\"num\">").Append(Interval(p.Ci95, p.StandardError)).Append("</td>")
              .Append("<td class=\"num\">").Append(Rounded(p.Bias, p.StandardError)).Append("</td></tr>\n");
        }

        sb.Append("<tr><th scope=\"row\">model's onset μ_lab</th>");
        sb.Append(double.IsFinite(c.Onset.Value)
            ? "<td class=\"num\">" + WithError(c.Onset.Value, c.Onset.StandardError) + units + "</td><td class=\"num\">" + Interval(c.OnsetCi95, c.Onset.StandardError) + units + "</td><td></td>"
            : "<td colspan=\"3\">none in reach</td>");
        sb.Append("</tr>\n</tbody></table>\n");
        if (double.IsFinite(c.Onset.Value))
        {
            sb.Append("<p class=\"caution\">The model's onset is where the fitted model stops turning; near it the system turns slowly and ")
              .Append("may stall or start unexpectedly. ").Append(E(TextReport.Caution)).Append("</p>\n");
        }

        sb.Append("<h3>Where the model fits worst</h3>\n<table class=\"runs\">\n<thead><tr><th>run or phase region</th><th>misfit ÷ expected</th><th>mean residual</th></tr></thead>\n<tbody>\n");
        foreach (var r in c.WorstRuns)
        {
            sb.Append("<tr><td>").Append(E(r.File)).Append(" (μ = ").Append(G(r.Param)).Append(units).Append(")</td><td class=\"num\">").Append(Plain(r.Ratio, 3))
              .Append("</td><td>").Append(Residual(r.MeanResidual)).Append("</td></tr>\n");
        }

        foreach (var g in c.WorstRegions)
        {
            sb.Append(string.Create(Inv, $"<tr><td>θ in [{g.From:F2}, {g.To:F2}) rad</td><td class=\"num\">")).Append(Plain(g.Ratio, 3))
              .Append("</td><td>").Append(Residual(g.MeanResidual)).Append("</td></tr>\n");
        }

        sb.Append("</tbody></table>\n<p class=\"note\">Misfit ÷ expected: the run's (or region's) sum of squared residuals over its mean in the ")
          .Append("simulated replicates; about 1 is a good fit. Mean residuals are in units of the replicates' RMS residual.");
        if (figureNames.Contains("model"))
        {
            sb.Append(" The runs are drawn against the model in <a href=\"#fig-model\">the model figure</a>.");
        }

        sb.Append("</p>\n");
        if (c.Diagnostics.Count > 0)
        {
            sb.Append("<ul class=\"diags\">\n");
            foreach (var d in c.Diagnostics)
            {
                sb.Append("<li class=\"").Append(d.Severity == Severity.Warning ? "warning" : "note").Append("\">").Append(E(d.Message))
                  .Append(" <span class=\"code\">(").Append(E(d.Code)).Append(")</span></li>\n");
            }

            sb.Append("</ul>\n");
        }

        sb.Append("<p class=\"note\">Errors, intervals and the verdict come from a parametric bootstrap: the whole analysis repeated on ")
          .Append(c.BiasCorrected
              ? "runs simulated from the fitted model less the reconstruction's smoothing bias, which a pilot stage estimated. "
              : "runs simulated from the fitted model itself (no pilot stage removed the reconstruction's smoothing bias this time). ")
          .Append("See docs/model-expressions.md for the method and its measured calibration.</p>\n</section>\n");
    }

    private static string Residual(double r) => !double.IsFinite(r) ? "–" :
        string.Create(Inv, $"model too {(r > 0 ? "fast" : "slow")} by {Math.Abs(r):F2}");

    private static void Recommended(StringBuilder sb, RecommendedOnset r, string units)
    {
        sb.Append("<div class=\"recommended\" id=\"recommended\"><p class=\"label\">Recommended onset μc</p>");
        if (!r.IsAvailable)
        {
            sb.Append("<p class=\"value\">none</p><p class=\"basis\">").Append(E(Capitalise(r.Reason))).Append(".</p></div>\n");
            return;
        }

        sb.Append("<p class=\"value\">").Append(WithError(r.Value, r.StandardError)).Append(units).Append("</p>")
          .Append("<p class=\"interval\">95% interval ").Append(Interval(r.Ci95, r.StandardError)).Append(units).Append("</p>")
          .Append("<p class=\"basis\"><strong>Basis: ").Append(E(WireNames.Of(r.Basis))).Append("</strong>. ").Append(E(Capitalise(r.Reason))).Append(".</p></div>\n");
    }

    private static void OnsetRow(StringBuilder sb, string label, OnsetEstimate e, string units, string css)
    {
        sb.Append("<tr class=\"").Append(css).Append("\"><th scope=\"row\">").Append(E(label)).Append("</th>");
        if (!e.IsAvailable)
        {
            var why = e.Diagnostics.Count > 0 ? e.Diagnostics[0].Message : "not available";
            sb.Append("<td colspan=\"4\">").Append(E(TextReport.NotAvailable(why))).Append("</td></tr>\n");
            return;
        }

        sb.Append("<td class=\"num\">").Append(WithError(e.Value, e.StandardError)).Append(units).Append("</td>")
          .Append("<td class=\"num\">").Append(Interval(e.Ci95, e.StandardError)).Append(units).Append("</td>")
          .Append("<td class=\"num\">").Append(e.Runs.ToString(Inv)).Append("</td>")
          .Append("<td>").Append(e.Curve is { } c ? E(c.Description) : "–").Append("</td></tr>\n");
    }

    private static readonly string[] TrendFigures = ["trend-a", "trend-period"];

    /// <summary>The suggested next runs as a table, with the caution beside it: they lie closer to the onset than the runs so far.</summary>
    private static void NextMeasurements(StringBuilder sb, AnalysisReport report, IReadOnlyList<string> figureNames)
    {
        if (report.NextMeasurements.Count == 0)
        {
            return;
        }

        var pu = report.ParamUnits is { Length: > 0 } p ? " " + E(p) : string.Empty;
        var tu = report.TimeUnit is { Length: > 0 } t ? E(t) : "time units";
        sb.Append("<section id=\"next\"><h2>Next measurements</h2>\n<p>Where new runs would shrink each route's 95% onset interval most ")
          .Append("(c-optimal design for the root of the route's trend; Atkinson, Donev &amp; Tobias 2007, §10).</p>\n")
          .Append("<div class=\"next-wrap\"><table class=\"runs\">\n<thead><tr><th>route</th><th>new runs</th><th>at μ</th><th>period about (")
          .Append(tu).Append(")</th><th>95% interval now</th><th>expected after</th></tr></thead>\n<tbody>\n");
        foreach (var m in report.NextMeasurements)
        {
            var route = m.Route == OnsetRoute.Bottleneck ? report.FromBottleneck : report.FromPeriod;
            var now = Interval(route.Ci95, route.StandardError);
            sb.Append("<tr><td>").Append(E(WireNames.Of(m.Route))).Append(" route</td><td class=\"num\">").Append(m.Runs.ToString(Inv))
              .Append("</td><td class=\"num\">").Append(E(NextRunWording.Param(m, report))).Append(pu)
              .Append("</td><td class=\"num\">").Append(double.IsFinite(m.ExpectedPeriod) ? G(m.ExpectedPeriod, 3) : "–")
              .Append("</td><td class=\"num\">").Append(now).Append(pu)
              .Append("</td><td>").Append(E(NextRunWording.Narrowing(m))).Append("</td></tr>\n");
        }

        sb.Append("</tbody></table>\n<p class=\"caution\">These runs lie close to the onset, where the system turns slowly and may stall or ")
          .Append("start unexpectedly. ").Append(E(TextReport.Caution)).Append("</p></div>\n");
        var marked = TrendFigures.Where(figureNames.Contains).ToList();
        if (marked.Count > 0)
        {
            sb.Append("<p class=\"note\">The suggested values are marked (black open circles) on ")
              .Append(string.Join(" and ", marked.Select(n => $"<a href=\"#fig-{n}\">{(n == "trend-a" ? "the bottleneck route's trend" : "the period route's trend")}</a>")))
              .Append(". The expected narrowing assumes the new runs follow the fitted trend with errors like their neighbours'; it is the ratio of the interval's half-widths after and now in the linear approximation μc ± t·sd/|slope| (delta method), applied to the route's reported interval above.</p>\n");
        }

        sb.Append("</section>\n");
    }

    private static void Figures(StringBuilder sb, IReadOnlyList<(Figure Figure, string Svg)> figures, AnalysisReport report)
    {
        sb.Append("<section id=\"figures\"><h2>Figures</h2>\n");
        if (NoSignalOrbit(report) is { } why)
        {
            sb.Append("<p class=\"note\" id=\"no-signal-orbit\">").Append(E(why)).Append("</p>\n");
        }

        for (var i = 0; i < figures.Count; i++)
        {
            var (fig, svg) = figures[i];
            sb.Append("<figure id=\"fig-").Append(E(fig.Name)).Append("\">\n<h3>Figure ").Append(i + 1).Append(". ").Append(E(fig.Title)).Append("</h3>\n");
            sb.Append(InlineSvg(svg, "f" + (i + 1).ToString(Inv) + "-"));
            sb.Append("\n<figcaption>").Append(E(fig.Caption)).Append(" Files: ").Append(E(fig.Name)).Append(".png, ").Append(E(fig.Name)).Append(".svg.</figcaption>\n</figure>\n");
        }

        sb.Append("</section>\n");
    }

    /// <summary>
    /// One line on why single-signal runs that turned have no orbit figure: their protophase was not asked for, or
    /// could not be made (<c>no-signal-orbit</c>); null when every such run has its panel or there is none.
    /// </summary>
    internal static string? NoSignalOrbit(AnalysisReport report)
    {
        var missing = report.Runs.Where(r => r.InputKind == Ingest.RecordingKind.Signal && r.IsTurning && r.SignalOrbitView is null).ToList();
        if (missing.Count == 0)
        {
            return null;
        }

        var failed = report.AllDiagnostics.Any(d => d.Code == "no-signal-orbit");
        var drawn = report.Runs.Any(r => r.SignalOrbitView is not null);
        if (failed || drawn)
        {
            return string.Create(Inv, $"{missing.Count} single-signal run(s) that turn have no panel in the orbit figure: no protophase could be made from their delay-embedded orbit (see Diagnostics), so they carry periods only.");
        }

        return "No orbit figure: the single-signal runs carry periods from their events only, because no protophase was reconstructed from the signal (nffit analyze --signal-protophase reconstructs one and draws its orbit).";
    }

    /// <summary>The run table; the columns of the field and the bottleneck fit only when some run has them (not for event times).</summary>
    private static void Runs(StringBuilder sb, AnalysisReport report)
    {
        var tu = report.TimeUnit is { Length: > 0 } t ? E(t) : "time unit";
        var fit = report.Runs.Any(r => r.Bottleneck is not null || r.Field is not null);
        sb.Append("<section id=\"runs\"><h2>Runs</h2>\n<div class=\"scroll\"><table class=\"runs\">\n<thead><tr>")
          .Append("<th>run</th><th>μ").Append(report.ParamUnits is { Length: > 0 } pu ? " (" + E(pu) + ")" : string.Empty).Append("</th>");
        if (fit)
        {
            sb.Append("<th>θ* (rad)</th><th>a (rad/").Append(tu).Append(")</th><th>b (1/(rad·").Append(tu).Append("))</th>");
        }

        sb.Append("<th>T measured (").Append(tu).Append(")</th>");
        if (fit)
        {
            sb.Append("<th>π/√(ab) (").Append(tu).Append(")</th><th>∮dθ/θ̇ (").Append(tu).Append(")</th>");
        }

        sb.Append("<th>revolutions</th><th>flags</th></tr></thead>\n<tbody>\n");
        foreach (var r in report.Runs.OrderBy(r => r.Param))
        {
            var b = r.Bottleneck;
            var p = r.Period;
            sb.Append("<tr><td>").Append(E(r.Label ?? r.File)).Append("</td>")
              .Append("<td class=\"num\">").Append(G(r.Param)).Append("</td>");
            if (fit)
            {
                sb.Append("<td class=\"num\">").Append(b is null ? "–" : WithError(b.Phase.Value, b.Phase.StandardError)).Append("</td>")
                  .Append("<td class=\"num\">").Append(b is null ? "–" : WithError(b.A.Value, b.A.StandardError)).Append("</td>")
                  .Append("<td class=\"num\">").Append(b is null ? "–" : WithError(b.B.Value, b.B.StandardError)).Append("</td>");
            }

            sb.Append("<td class=\"num\">").Append(p is null ? "–" : WithError(p.Measured.Value, p.Measured.StandardError)).Append("</td>");
            if (fit)
            {
                sb.Append("<td class=\"num\">").Append(p is null ? "–" : G(p.FromBottleneck.Value, 5)).Append("</td>")
                  .Append("<td class=\"num\">").Append(p is null ? "–" : G(p.FromField.Value, 5)).Append("</td>");
            }

            sb.Append("<td class=\"num\">").Append((p?.Revolutions ?? 0).ToString(Inv)).Append("</td>")
              .Append("<td>").Append(report.FlagsOf(r) is { Count: > 0 } flags ? E(string.Join(", ", flags.Select(WireNames.Of))) : "ok").Append("</td></tr>\n");
        }

        sb.Append("</tbody></table></div>\n<p class=\"note\">Values ± one standard error. The same numbers, unrounded, are in runs.csv; ")
          .Append(report.Runs.Any(r => r.Field is not null)
              ? "each run's reconstructed field with its band is in field.csv; "
              : "no run has a reconstructed field (periods only), so field.csv holds its header alone; ")
          .Append("everything is in report.json.</p></section>\n");
    }

    private static void Diagnostics(StringBuilder sb, AnalysisReport report)
    {
        var diags = report.AllDiagnostics.OrderByDescending(d => d.Severity).ToList();
        sb.Append("<section id=\"diagnostics\"><h2>Diagnostics</h2>\n");
        if (diags.Count == 0)
        {
            sb.Append("<p>None: no run or fit raised a warning.</p></section>\n");
            return;
        }

        sb.Append("<ul class=\"diags\">\n");
        foreach (var d in diags)
        {
            var level = d.Severity switch { Severity.Error => "error", Severity.Warning => "warning", _ => "note" };
            sb.Append("<li class=\"").Append(level).Append("\"><span class=\"level\">").Append(level).Append("</span> ");
            if (d.File is not null)
            {
                sb.Append("<code>").Append(E(d.File)).Append("</code>: ");
            }

            sb.Append(E(d.Message)).Append(" <span class=\"code\">(").Append(E(d.Code)).Append(")</span></li>\n");
        }

        sb.Append("</ul></section>\n");
    }

    /// <summary>The method notes of what ran on these runs: smoothing and the field only when a run was smoothed, the ellipse only for positions, event times only for events.</summary>
    private static void Methods(StringBuilder sb, AnalysisReport report)
    {
        sb.Append("<section id=\"methods\"><h2>Method notes</h2>\n<dl>\n");
        var smoothed = report.Runs.Any(r => r.Smoothing is not null);
        var fields = report.Runs.Any(r => r.Field is not null);
        var bottleneck = report.Runs.Any(r => r.Bottleneck is not null);
        var positions = report.Runs.Any(r => r.Orbit is not null);
        var eventTimes = report.Runs.Any(r => r.InputKind == Ingest.RecordingKind.Events);
        var signals = report.Runs.Any(r => r.InputKind == Ingest.RecordingKind.Signal);
        // A signal run with a field had a protophase (run lines read back keep the field, not the orbit).
        var protophase = report.Runs.Any(r => r.SignalOrbit is not null || (r.InputKind == Ingest.RecordingKind.Signal && r.Field is not null));
        var signalPeriodsOnly = report.Runs.Any(r => r.InputKind == Ingest.RecordingKind.Signal && r.Field is null && r.IsTurning);
        var notes = new List<(string Term, string Text)>();
        if (positions)
        {
            notes.Add(OrbitNote);
        }

        if (eventTimes)
        {
            notes.Add(EventNote);
        }

        if (signals)
        {
            notes.Add(("Events in a single signal", SignalEventText + (protophase
                ? signalPeriodsOnly
                    ? " A run without a protophase (none could be made from its orbit) enters the period route only, through the mean interval between its events."
                    : string.Empty
                : " No phase between events was reconstructed: no smoothing, field or bottleneck fit ran on these runs, and they enter the period route only, through the mean interval between events.")));
        }

        if (protophase)
        {
            notes.Add(report.Runs.Any(r => r.SignalOrbitView is not null)
                ? SignalPhaseNote with { Text = SignalPhaseNote.Text + " The orbit figure shows the embedded samples, the mean orbit, the cycles left out and the bottleneck." }
                : SignalPhaseNote);
        }

        foreach (var (term, text) in MethodNotes)
        {
            var ran = term switch
            {
                "Phase velocity" => smoothed,
                "Field on the circle" => fields,
                "Bottleneck normal form" => bottleneck,
                "Agreement" => report.FromBottleneck.IsAvailable && report.FromPeriod.IsAvailable,
                _ => true,
            };
            if (ran)
            {
                notes.Add(term switch
                {
                    "Periods" when !bottleneck => (term, PeriodsWithoutBottleneck),
                    "Onset, both routes" when !report.FromBottleneck.IsAvailable || !report.FromPeriod.IsAvailable =>
                        OneRouteNote(report.FromBottleneck.IsAvailable, report.FromPeriod.IsAvailable),
                    _ => (term, text),
                });
            }
        }

        foreach (var (term, text) in notes)
        {
            sb.Append("<dt>").Append(E(term)).Append("</dt><dd>").Append(E(text)).Append("</dd>\n");
        }

        sb.Append("</dl></section>\n");
    }

    private static readonly (string Term, string Text) OrbitNote = ("Positions to phase", "For runs recorded as positions, an ellipse " +
        "is fitted to the orbit (direct least squares, Fitzgibbon, Pilu & Fisher 1999, each sample weighted by the arc it covers) and " +
        "the phase is the parametric angle in its axes; positions far off it are dropped. An orbit far from an ellipse gives a " +
        "protophase, which leaves onset and periods unchanged. The orbit figure shows the samples, the fitted orbit and the rejected points.");

    private static readonly (string Term, string Text) EventNote = ("Event times", "For runs recorded as event times (one event per " +
        "revolution) there is no phase between events: no smoothing, field or bottleneck fit ran on them, and they enter the period " +
        "route only, through the mean interval between events.");

    private const string SignalEventText = "In a single signal, events are its upward crossings of a threshold (given, or halfway from " +
        "the signal's median to the median height of its excursions), counted again only once the signal has fallen below the threshold " +
        "by the hysteresis and after the refractory time; a signal with no excursion standing clear of its noise has no events and " +
        "does not turn. The levels of each run are in the text summary.";

    private static readonly (string Term, string Text) SignalPhaseNote = ("Signal to protophase", "The signal is plotted against " +
        "itself a delay earlier, (s(t), s(t − τ)), which traces a closed curve for a system on a limit cycle (Takens 1981); τ is a " +
        "quarter of the events' median width. The protophase is the arc length along the mean orbit, scaled to 2π per turn, of each " +
        "sample's nearest point on it; a cycle whose protophase runs backwards or does not go once round is left out. The onset and " +
        "the periods do not depend on the choice of protophase; a and b are in its units.");

    /// <summary>The onset note when one route (or neither) gave an estimate: only the fits that gave one are described.</summary>
    private static (string Term, string Text) OneRouteNote(bool bottleneck, bool period)
    {
        const string Fit = "fitted against μ by weighted least squares, the straight line or a quadratic chosen by AICc (Hurvich & Tsai 1989), " +
            "errors scaled by the reduced χ² (Birge ratio). The onset is the zero of the trend; its 95% interval inverts the test of a " +
            "zero there (Fieller 1954).";
        return (bottleneck, period) switch
        {
            (true, false) => ("Onset, bottleneck route", "a is " + Fit + " The period route gave no onset (see Diagnostics)."),
            (false, true) => ("Onset, period route", "1/T² is " + Fit + " The square-root law T = α(μ−μc)^−½ + β (the bottleneck passage plus a " +
                "constant excursion time; Strogatz §4.3) is also tried on the periods, μc by profile likelihood with the same Birge-scaled " +
                "test, and used when AICc, computed for both as densities of the measured periods, prefers it. The bottleneck route gave " +
                "no onset (see Diagnostics)."),
            _ => ("Onset", "Neither route gave an onset (see Diagnostics)."),
        };
    }

    private const string PeriodsWithoutBottleneck = "The measured period is the mean time between crossings of one phase (or between " +
        "events), with its standard error from the spread of the revolutions.";

    private static readonly (string Term, string Text)[] MethodNotes =
    [
        ("Phase velocity", "The phase of each run is smoothed by a cubic smoothing spline (Reinsch 1967; Green & Silverman 1994, ch. 2) " +
            "with the smoothing chosen by generalised cross-validation (Craven & Wahba 1979; trace of the influence matrix as in " +
            "Hutchinson & de Hoog 1985); dθ/dt is the spline's derivative."),
        ("Field on the circle", "dθ/dt is averaged over phase in equal bins. Its uncertainty comes from a block bootstrap " +
            "(Künsch 1989) with whole revolutions as blocks, because samples along one trajectory are correlated."),
        ("Bottleneck normal form", "Near a saddle-node on the circle the slowest part of the field is θ̇ ≈ a + b(θ−θ*)², with a ∝ μ − μc " +
            "(Strogatz, Nonlinear Dynamics and Chaos, 2nd ed., §4.3). a and b come from a weighted quadratic fit in a window whose " +
            "half-width follows the bottleneck's own width √(a/b); their errors from the same bootstrap."),
        ("Periods", "The measured period is the mean time between crossings of the phase opposite the bottleneck. Predictions: " +
            "π/√(ab), the passage time of the normal form over the whole line (Strogatz §4.3), and ∮dθ/θ̇ from the reconstructed field."),
        ("Onset, both routes", "a and 1/T² are fitted against μ by weighted least squares, the straight line or a quadratic chosen by " +
            "AICc (Hurvich & Tsai 1989), errors scaled by the reduced χ² (Birge ratio). The onset is the zero of the trend; its 95% " +
            "interval inverts the test of a zero there (Fieller 1954). The period route also tries T = α(μ−μc)^−½ + β on the periods " +
            "(the bottleneck passage plus a constant excursion time; Strogatz §4.3), μc by profile likelihood with the same Birge-scaled " +
            "test, and uses it when AICc, computed for both as densities of the measured periods, prefers it."),
        ("Agreement", "z = (μc₁ − μc₂)/√(σ₁² + σ₂²); |z| > 2 is reported as a disagreement with its most likely reason."),
        ("Recommended onset", "When the routes agree, their inverse-variance weighted mean Σwᵢμcᵢ/Σwᵢ with wᵢ = 1/σᵢ² and standard error " +
            "(Σwᵢ)^−½ (Cochran 1954), its 95% interval from the routes' own quantiles; when they disagree, the route without a law " +
            "misfit, else the period route; when only one route gives a bounded interval, that route; none when the onset is not a " +
            "saddle-node on the circle. The two routes share the runs, so their errors may be correlated; the seeded calibration of " +
            "this interval is in docs/methods.md."),
        ("Scaling", "T = C|μ − μc|^(−β), fitted on log T with μc free and up to two correction terms chosen by AICc. " +
            "A saddle-node on the circle gives β = ½ (Strogatz §4.3)."),
    ];

    /// <summary>
    /// Makes an SVG document fit for inlining: drops the XML declaration, prefixes every id (and the references to
    /// it) so several figures on one page do not share clip paths, and lets it scale with the page.
    /// </summary>
    internal static string InlineSvg(string svg, string prefix)
    {
        ArgumentNullException.ThrowIfNull(svg);
        var s = XmlDeclaration().Replace(svg, string.Empty);
        s = IdAttribute().Replace(s, m => $"id=\"{prefix}{m.Groups[1].Value}\"");
        s = UrlReference().Replace(s, m => $"url(#{prefix}{m.Groups[1].Value})");
        s = HrefReference().Replace(s, m => $"{m.Groups[1].Value}=\"#{prefix}{m.Groups[2].Value}\"");
        return s.Trim();
    }

    [GeneratedRegex("<\\?xml[^>]*\\?>")]
    private static partial Regex XmlDeclaration();

    [GeneratedRegex("\\bid=\"([^\"]+)\"")]
    private static partial Regex IdAttribute();

    [GeneratedRegex("url\\(#([^)\"']+)\\)")]
    private static partial Regex UrlReference();

    [GeneratedRegex("((?:xlink:)?href)=\"#([^\"]+)\"")]
    private static partial Regex HrefReference();

    // The whole face is about 0.75 MB (1 MB in base64); the glyphs of one page, tens of kB.
    private static string FontFace(bool bold, IReadOnlyCollection<int> used)
    {
        var whole = FigureFonts.FontBytes(bold);
        var font = FontSubset.Subset(whole, used) ?? whole;
        return "@font-face{font-family:\"" + FigureFonts.Family + "\";font-weight:" + (bold ? "bold" : "normal")
            + ";src:url(data:font/ttf;base64," + Convert.ToBase64String(font) + ") format(\"truetype\");}\n";
    }

    /// <summary>
    /// Every character the page can show: those of its text, markup and inline SVG with character references decoded
    /// (a superset of what is drawn), their upper and lower case (CSS text-transform), what a browser draws itself
    /// (list bullets, the ellipsis of clipped text, the no-break space) and <see cref="HintingReferences"/>.
    /// </summary>
    internal static IReadOnlyCollection<int> UsedCodePoints(string page)
    {
        ArgumentNullException.ThrowIfNull(page);
        var used = new SortedSet<int> { 0x20, 0xA0, 0x2022, 0x2026 };
        foreach (var rune in (HintingReferences + WebUtility.HtmlDecode(page)).EnumerateRunes())
        {
            if (rune.Value >= 0x20)
            {
                used.Add(rune.Value);
                used.Add(Rune.ToUpperInvariant(rune).Value);
                used.Add(Rune.ToLowerInvariant(rune).Value);
            }
        }

        return used;
    }

    /// <summary>
    /// The reference characters from which FreeType's auto-hinter, which browsers on Linux use, measures each script's
    /// alignment zones and stem widths (Latin with its subscripts and superscripts, Greek, Cyrillic; FreeType's
    /// src/autofit/afblue.dat, list from memory). A subset without them is hinted with other zones, and round or
    /// slanted glyphs then differ from the whole font by an antialiasing step; with them the page renders pixel for
    /// pixel as with the whole font (ChromiumReportTests).
    /// </summary>
    internal const string HintingReferences =
        "THEZOCQSLUfijkdbhuvxzoescnrpqgy" + "₀₁₂₃₅₇₈ᵢⱼₕₖₗₐₑₒₓₙₛᵥᵤᵣᵦᵧᵨᵩₚ" + "⁰¹²³⁵⁷ᵀᴴᴱᴼᴸᵁᵇᵈᵏʰʲᶠⁱᵉᵒʳˢˣᶜᶻᵖʸᵍ"
        + "ΓΒΕΖΘΟΩΔΞβθδζλξαειοπστωγημρφχψ" + "БВЕПЗОСЭШхпншезосруф";

    private static string E(string s) => WebUtility.HtmlEncode(s);

    // Only Latin letters: a Greek symbol such as β must keep its case (Β would read as a B).
    private static string Capitalise(string s) => s.Length == 0 || !char.IsAsciiLetterLower(s[0]) ? s : char.ToUpperInvariant(s[0]) + s[1..];

    private const string Style = """
        :root{--ink:#1e1e24;--muted:#5a5a64;--rule:#d8d8de;--field:#1f5aa6;--period:#b86e12;--good:#2f6f3e;--bad:#a3322a;--warn:#8a5a00}
        *{box-sizing:border-box}
        body{margin:0;background:#fafafb;color:var(--ink);font:16px/1.5 "DejaVu Sans",sans-serif}
        main{max-width:1020px;margin:0 auto;padding:24px 28px 60px;background:#fff}
        h1{font-size:28px;margin:0 0 4px}
        h2{font-size:21px;margin:36px 0 12px;padding-bottom:4px;border-bottom:2px solid var(--rule)}
        h3{font-size:17px;margin:0 0 8px}
        .meta{color:var(--muted);margin:0}
        table{border-collapse:collapse;font-size:14px}
        th,td{padding:5px 10px;border-bottom:1px solid var(--rule);text-align:left;vertical-align:top}
        thead th{border-bottom:2px solid var(--ink);white-space:nowrap}
        td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
        table.answer{font-size:16px;margin-bottom:12px}
        tr.route-bottleneck th{border-left:6px solid var(--field)}
        .recommended{border:2px solid var(--ink);padding:10px 16px;margin:8px 0 16px;max-width:640px}
        .recommended p{margin:2px 0}
        .recommended .label{font-weight:bold;color:var(--muted);font-size:15px}
        .recommended .value{font-size:26px;font-weight:bold;font-variant-numeric:tabular-nums}
        .recommended .interval{font-size:17px;font-variant-numeric:tabular-nums}
        .recommended .basis{font-size:14px}
        tr.route-period th{border-left:6px solid var(--period)}
        .verdict{padding:8px 12px;border-left:6px solid var(--muted);background:#f3f3f6;margin:8px 0}
        .verdict.good{border-color:var(--good)}
        .verdict.bad{border-color:var(--bad)}
        figure{margin:24px 0 32px}
        figure svg{display:block;width:100%;height:auto;border:1px solid var(--rule)}
        figcaption{color:var(--muted);font-size:14px;margin-top:6px}
        .scroll{overflow-x:auto}
        table.runs{font-size:13px}
        table.runs th,table.runs td{padding:4px 6px}
        table.runs td:first-child{white-space:nowrap}
        .note{color:var(--muted);font-size:14px}
        ul.diags{padding-left:0;list-style:none}
        ul.diags li{margin:4px 0;padding-left:8px;border-left:4px solid var(--rule)}
        ul.diags li.warning{border-color:var(--warn)}
        ul.diags li.error{border-color:var(--bad)}
        .level{font-weight:bold;text-transform:uppercase;font-size:12px}
        .code{color:var(--muted);font-size:13px}
        dt{font-weight:bold;margin-top:10px}
        dd{margin:2px 0 0 0}
        .caution{padding:10px 14px;border:2px solid var(--warn);background:#fff8ea;font-weight:bold}
        .next-wrap{display:flex;gap:16px;align-items:flex-start;flex-wrap:wrap}
        .next-wrap .caution{flex:1 1 260px;margin:0;font-size:14px}

        """;
}
