using System.Globalization;
using NormalFormFit.Compare;

namespace NormalFormFit.Reporting;

/// <summary>
/// The model comparison as plain text: parameters with errors and intervals, the onset, the verdict, the worst runs
/// and phase regions, and the diagnostics. Printed by <c>nffit compare</c> and appended to the report folder's text.
/// </summary>
public static class ComparisonText
{
    /// <summary>The text of <paramref name="c"/>, one item a line (invariant culture); values with the digits their standard errors support.</summary>
    /// <param name="c">The comparison.</param>
    /// <param name="paramUnits">Unit of the control parameter (of μ_lab and the onset), when known.</param>
    public static string Format(ModelComparison c, string? paramUnits = null)
    {
        ArgumentNullException.ThrowIfNull(c);
        var u = paramUnits is { Length: > 0 } pu ? " " + pu : string.Empty;
        var ic = CultureInfo.InvariantCulture;
        var w = new StringWriter(ic);
        w.WriteLine($"model  dθ/dt = {c.Expression}");
        foreach (var p in c.Parameters.Append(c.Offset).Append(c.Scale))
        {
            w.WriteLine(p.Fixed
                ? string.Create(ic, $"  {p.Name,-10} {ReportNumbers.G(p.Value),12}  (held)")
                : double.IsNaN(p.Value) ? $"  {p.Name,-10} unidentifiable: the data do not determine it"
                : string.Create(ic, $"  {p.Name,-10} {ReportNumbers.Rounded(p.Value, p.StandardError),12}  ± {ReportNumbers.Rounded(p.StandardError, p.StandardError)}   95% {ReportNumbers.Interval(p.Ci95, p.StandardError)}"));
        }

        w.WriteLine(double.IsFinite(c.Onset.Value)
            ? $"onset  μ_lab = {ReportNumbers.WithError(c.Onset.Value, c.Onset.StandardError)}{u}   95% {ReportNumbers.Interval(c.OnsetCi95, c.Onset.StandardError)}{u}"
            : "onset  none in reach of the runs");
        var replicates = c.ReplicateStatistics.Count + c.FailedReplicates;
        w.WriteLine(string.Create(ic, $"verdict  {(c.Consistent ? "consistent with the data" : "REJECTED by the data")}  (Q = {ReportNumbers.Plain(c.Statistic, 4)}; {replicates} simulated from the fit: mean {ReportNumbers.Plain(c.Expected, 4)}, largest {ReportNumbers.Plain(c.ReplicateStatistics.Count > 0 ? c.ReplicateStatistics.Max() : double.NaN, 3)}; p = {ReportNumbers.G(c.PValue, 2)})"));
        w.WriteLine(c.Sense switch
        {
            TurningSense.Forward => "turning sense  the phase increases in every run as read; the model is fitted with positive speeds",
            TurningSense.Backward => "turning sense  the phase decreases in every run as read; the model is fitted with negative speeds (the file's own convention)",
            _ => "turning sense  mixed: the phase decreases in some runs as read and increases in others",
        });
        w.WriteLine("worst runs (misfit over its mean in the simulated replicates; about 1 is a good fit):");
        foreach (var r in c.WorstRuns)
        {
            w.WriteLine(string.Create(ic, $"  {r.File}  μ = {ReportNumbers.G(r.Param, 6)}{u}  {ReportNumbers.Plain(r.Ratio, 2)}  model {(r.MeanResidual > 0 ? "too fast" : "too slow")} on average by {Math.Abs(r.MeanResidual):F2} (replicate RMS)"));
        }

        w.WriteLine("worst phase regions (radians, in the data's phase):");
        foreach (var g in c.WorstRegions)
        {
            w.WriteLine(string.Create(ic, $"  [{g.From:F2}, {g.To:F2})  {ReportNumbers.Plain(g.Ratio, 2)}  model {(g.MeanResidual > 0 ? "too fast" : "too slow")} on average by {Math.Abs(g.MeanResidual):F2} (replicate RMS)"));
        }

        foreach (var d in c.Diagnostics)
        {
            w.WriteLine(d.ToString());
        }

        w.WriteLine(TextReport.Caution);

        return w.ToString();
    }
}
