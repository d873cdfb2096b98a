using System.Globalization;
using System.Text;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Onset;

namespace NormalFormFit.Reporting;

/// <summary>The human-readable summary: the answer first, then the per-run table, then the diagnostics.</summary>
public static class TextReport
{
    /// <summary>The caution printed with every result.</summary>
    public const string Caution =
        "Caution: these estimates inform engineering judgement; they do not replace it. Before operating rotating machinery, " +
        "power or electrical equipment near a computed onset, follow local codes and the practice of qualified, licensed personnel.";

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>Formats the report.</summary>
    public static string Format(AnalysisReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        var sb = new StringBuilder();
        var u = report.ParamUnits is null ? string.Empty : " " + report.ParamUnits;
        sb.AppendLine(report.ParamName is null && report.TimeUnit is null
            ? "Onset (95% intervals)"
            : $"Onset (95% intervals; μ is {report.ParamName ?? "the control parameter"}{(report.ParamUnits is null ? string.Empty : " in " + report.ParamUnits)}, time in {report.TimeUnit ?? "the runs' units"})");
        sb.AppendLine(Recommended(report.Recommended, u));
        sb.AppendLine("  evidence, the two routes:");
        sb.AppendLine(Onset("  bottleneck route (a → 0):  ", report.FromBottleneck, u));
        sb.AppendLine(Onset("  period route (T⁻² → 0):    ", report.FromPeriod, u));
        RouteCaveats(sb, report);
        var ag = report.Agreement;
        sb.AppendLine(double.IsFinite(ag.Z)
            ? string.Create(Inv, $"  agreement:                 z = {ag.Z:F2}, {(ag.Consistent ? "consistent" : "DISAGREE: " + ag.Reason)}")
            : "  agreement:                 not available");
        if (report.Scaling is { } s)
        {
            sb.AppendLine(string.Create(Inv, $"  scaling T ∝ (μ−μc)^−β:     β = {ReportNumbers.Rounded(s.Exponent.Value, Math.Min(s.Exponent.StandardError, 0.01))}  {ReportNumbers.Interval(s.Ci95, Math.Min(s.Exponent.StandardError, 0.01))}"));
            sb.AppendLine($"  kind of onset:             {WireNames.Of(report.Verdict.Kind)}");
            sb.AppendLine($"                             {report.Verdict.Evidence}");
        }
        else
        {
            sb.AppendLine("  scaling:                   not available (needs four runs with timed periods)");
        }

        NextRuns(sb, report, u);
        sb.AppendLine();
        // Units in the column heads when known: μ, a (rad per time unit), periods (time unit), κ (per time unit).
        var tu = report.TimeUnit is { } unit ? $" ({unit})" : string.Empty;
        var perT = report.TimeUnit is { } unit2 ? $" (/{unit2})" : string.Empty;
        var pu = report.ParamUnits is { } unit3 ? $" ({unit3})" : string.Empty;
        var header = new[] { "param" + pu, "θ*", "a" + perT, "±", "b" + perT, "±", "T meas" + tu, "±", "π/√(ab)", "∮dθ/θ̇", "revolutions", "κ rest" + perT, "D", "flags" };
        var rows = new List<string[]> { header };
        foreach (var r in report.Runs)
        {
            var b = r.Bottleneck;
            var p = r.Period;
            rows.Add(
            [
                G(r.Param, 6),
                b is null ? "–" : F(b.Phase.Value, 3),
                b is null ? "–" : ReportNumbers.Rounded(b.A.Value, b.A.StandardError),
                b is null ? "–" : G(b.A.StandardError, 2),
                b is null ? "–" : ReportNumbers.Rounded(b.B.Value, b.B.StandardError),
                b is null ? "–" : G(b.B.StandardError, 2),
                p is null ? "–" : ReportNumbers.Rounded(p.Measured.Value, p.Measured.StandardError),
                p is null ? "–" : G(p.Measured.StandardError, 2),
                p is null ? "–" : G(p.FromBottleneck.Value, 5),
                p is null ? "–" : G(p.FromField.Value, 5),
                (p?.Revolutions ?? 0).ToString(Inv),
                r.Relaxation is { } x ? G(x.Rate.Value, 4) : "–",
                r.Noise is { } nz ? Diffusion(nz.Diffusion) : "–",
                report.FlagsOf(r) is { Count: > 0 } flags ? string.Join(",", flags.Select(WireNames.Of)) : "ok",
            ]);
        }

        // Only the columns some run has a value in (event times have no field, no run may rest below onset): the run
        // parameter and the flags always.
        var keep = Enumerable.Range(0, header.Length).Where(c => c == 0 || c == header.Length - 1 || rows.Skip(1).Any(row => row[c] != "–")).ToArray();
        rows = [.. rows.Select(row => keep.Select(c => row[c]).ToArray())];
        var widths = Enumerable.Range(0, keep.Length).Select(c => rows.Max(row => row[c].Length)).ToArray();
        foreach (var row in rows)
        {
            var line = new StringBuilder("  ");
            for (var c = 0; c < row.Length; c++)
            {
                var cell = c == row.Length - 1 ? row[c] : row[c].PadLeft(widths[c]);
                line.Append(cell).Append(c == row.Length - 1 ? string.Empty : "  ");
            }

            sb.AppendLine(line.ToString().TrimEnd());
        }

        var dropped = report.Runs.Where(r => r.Dropped.Total > 0).ToList();
        if (dropped.Count > 0)
        {
            sb.AppendLine();
            sb.AppendLine("Rows not used (blank or non-finite; below the quality threshold; off the orbit; isolated phase jumps)");
            foreach (var r in dropped)
            {
                var d = r.Dropped;
                sb.AppendLine(string.Create(Inv,
                    $"  {G(r.Param, 6)}: {d.Total} of {r.Samples + d.Total} rows: {d.Blank} blank, {d.LowQuality} low quality, {d.OffOrbit} off the orbit, {d.PhaseJumps} phase jumps"));
            }
        }

        var orbits = report.Runs.Where(r => r.Orbit is not null).ToList();
        if (orbits.Count > 0)
        {
            sb.AppendLine();
            sb.AppendLine("Orbits (positions → phase by the fitted ellipse)");
            foreach (var r in orbits)
            {
                var o = r.Orbit!;
                var e = o.Ellipse;
                sb.AppendLine(string.Create(Inv,
                    $"  {G(r.Param, 6)}: centre ({G(e.CentreX, 5)}, {G(e.CentreY, 5)}), semi-axes {G(e.SemiMajor, 4)} × {G(e.SemiMinor, 4)}, tilt {e.Tilt * 180 / Math.PI:F1}°, RMS deviation {o.RmsDeviation:P2}, {o.Sense}{(o.IsProtophase ? "; NOT an ellipse: phase is a protophase, a and b in protophase units" : string.Empty)}"));
            }
        }

        var signals = report.Runs.Where(r => r.Events is not null).ToList();
        if (signals.Count > 0)
        {
            sb.AppendLine();
            sb.AppendLine("Events in the signal (upward threshold crossings with hysteresis)");
            foreach (var r in signals)
            {
                var ev = r.Events!;
                var su = ColumnNames.SplitParameterName(ev.Column).Unit is { } signalUnit ? " " + signalUnit : string.Empty;
                var eu = report.TimeUnit is { } timeUnit ? " " + timeUnit : string.Empty;
                sb.AppendLine(double.IsFinite(ev.Threshold)
                    ? string.Create(Inv,
                        $"  {G(r.Param, 6)}: {ev.Count} events in '{ev.Column}', threshold {G(ev.Threshold, 5)}{su} ({(ev.ThresholdGiven ? "given" : "from the signal")}), hysteresis {G(ev.Hysteresis, 4)}{su}, refractory {G(ev.RefractoryTime, 4)}{eu}{(ev.Glitches + ev.WithinRefractory > 0 ? $"; {ev.Glitches} glitch(es), {ev.WithinRefractory} early crossing(s) left out" : string.Empty)}")
                    : string.Create(Inv,
                        $"  {G(r.Param, 6)}: no events in '{ev.Column}': nothing stands {2 * SignalEvents.ClearOfNoise:G} noise SDs above its median {G(ev.Baseline, 5)}{su} (silent, does not turn)"));
            }
        }

        // Every diagnostic the page lists, in the page's order (most serious first), each on one line with its code.
        var diags = report.AllDiagnostics.OrderByDescending(d => d.Severity).ToList();
        if (diags.Count > 0)
        {
            sb.AppendLine();
            sb.AppendLine("Diagnostics");
            foreach (var d in diags)
            {
                sb.Append("  ").Append(d.ToString()).Append(" (").Append(d.Code).AppendLine(")");
            }
        }

        sb.AppendLine();
        sb.AppendLine(Caution);
        return sb.ToString();
    }

    private static void RouteCaveats(StringBuilder sb, AnalysisReport report)
    {
        var a = report.Verdict;
        var t = report.FromPeriod;
        if (a.RouteStatus != RouteStatus.Applicable && a.RouteStatus != RouteStatus.Unconfirmed)
        {
            sb.AppendLine($"  route status:              {WireNames.Of(a.RouteStatus)}: {a.RouteStatusReason}");
        }
        else if (a.RouteStatus == RouteStatus.Unconfirmed)
        {
            sb.AppendLine($"  route status:              unconfirmed: {a.RouteStatusReason}");
        }

        if (t.RunsBelowOnset > 0)
        {
            sb.AppendLine(string.Create(Inv, $"  runs below onset:          {t.RunsBelowOnset} used by the period route (relaxation rate κ, −κ²/4π² continues T⁻²)"));
        }
    }

    private static void NextRuns(StringBuilder sb, AnalysisReport report, string units)
    {
        if (report.NextMeasurements.Count == 0)
        {
            return;
        }

        sb.AppendLine();
        sb.AppendLine("Next measurements (where new runs shrink the onset interval most; the narrowing in the linear approximation)");
        foreach (var m in report.NextMeasurements)
        {
            var period = double.IsFinite(m.ExpectedPeriod) ? string.Create(Inv, $", period about {G(m.ExpectedPeriod, 3)}{(report.TimeUnit is { } tu ? " " + tu : string.Empty)}") : string.Empty;
            var route = m.Route == OnsetRoute.Bottleneck ? report.FromBottleneck : report.FromPeriod;
            var now = ReportNumbers.Interval(route.Ci95, route.StandardError);
            sb.AppendLine(string.Create(Inv,
                $"  {WireNames.Of(m.Route)} route: {m.Runs} run(s) at μ = {NextRunWording.Param(m, report)}{units}{period}: its 95% interval {now}{units} expected {NextRunWording.Narrowing(m)}"));
        }
    }

    private static string Recommended(RecommendedOnset r, string units)
    {
        const string label = "  recommended:               ";
        var basis = WireNames.Of(r.Basis);
        return !r.IsAvailable
            ? $"{label}none ({basis}): {r.Reason}"
            : string.Create(Inv, $"{label}μc = {ReportNumbers.WithError(r.Value, r.StandardError)}{units}  95% {ReportNumbers.Interval(r.Ci95, r.StandardError)}{units}  ({basis}: {r.Reason})");
    }

    private static string Onset(string label, OnsetEstimate e, string units)
    {
        if (!e.IsAvailable)
        {
            var why = e.Diagnostics.Count > 0 ? e.Diagnostics[0].Message : "not available";
            return label + NotAvailable(why);
        }

        return string.Create(Inv,
            $"{label}μc = {ReportNumbers.WithError(e.Value, e.StandardError)}{units}  95% {ReportNumbers.Interval(e.Ci95, e.StandardError)}{units}  ({e.Runs} runs, {Law(e)})");
    }

    /// <summary>"not available: why", without saying "not available" twice when the reason says it already.</summary>
    internal static string NotAvailable(string why) =>
        why.Contains("not available", StringComparison.Ordinal) ? why : "not available: " + why;

    private static string Law(OnsetEstimate e) => e.Curve?.Description ?? "no trend";

    // D within two standard errors of zero is shown as an upper bound: a negative estimate of a variance means "not resolved".
    private static string Diffusion(Estimate d) =>
        double.IsFinite(d.StandardError) && d.Value < 2 * d.StandardError
            ? "<" + G(Math.Max(d.Value, 0) + (2 * d.StandardError), 1)
            : G(d.Value, 2);

    private static string G(double x, int digits) => ReportNumbers.G(x, digits);

    private static string F(double x, int digits) => double.IsFinite(x) ? x.ToString("F" + digits.ToString(Inv), Inv) : "–";
}
