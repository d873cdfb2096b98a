using System.Globalization;
using NormalFormFit.Compare;

namespace NormalFormFit.Reporting;

/// <summary>
/// The model comparison as plain text: parameters with errors and intervals, the onset, the verdict, the worst runs
/// and phase regions, and the diagnostics. Printed by <c>nffit compare</c> and appended to the report folder's text.
/// </summary>
public static class ComparisonText
{
    /// <summary>The text of <paramref name="c"/>, one item a line (invariant culture).</summary>
    public static string Format(ModelComparison c)
    {
        ArgumentNullException.ThrowIfNull(c);
        var ic = CultureInfo.InvariantCulture;
        var w = new StringWriter(ic);
        w.WriteLine($"model  dθ/dt = {c.Expression}");
        foreach (var p in c.Parameters.Append(c.Offset).Append(c.Scale))
        {
            w.WriteLine(p.Fixed
                ? string.Create(ic, $"  {p.Name,-10} {p.Value,12:G6}  (held)")
                : double.IsNaN(p.Value) ? $"  {p.Name,-10} unidentifiable: the data do not determine it"
                : string.Create(ic, $"  {p.Name,-10} {p.Value,12:G6}  ± {p.StandardError:G2}   95% [{p.Ci95.Low:G6}, {p.Ci95.High:G6}]"));
        }

        w.WriteLine(string.Create(ic, $"onset  μ_lab = {c.Onset.Value:G6} ± {c.Onset.StandardError:G2}   95% [{c.OnsetCi95.Low:G6}, {c.OnsetCi95.High:G6}]"));
        var replicates = c.ReplicateStatistics.Count + c.FailedReplicates;
        w.WriteLine(string.Create(ic, $"verdict  {(c.Consistent ? "consistent with the data" : "REJECTED by the data")}  (Q = {c.Statistic:G4}; {replicates} simulated from the fit: mean {c.Expected:G4}, largest {(c.ReplicateStatistics.Count > 0 ? c.ReplicateStatistics.Max() : double.NaN):G4}; p = {c.PValue:G2})"));
        w.WriteLine(c.Sense switch
        {
            TurningSense.Forward => "turning sense  the phase increases in every run as read; the model is fitted with positive speeds",
            TurningSense.Backward => "turning sense  the phase decreases in every run as read; the model is fitted with negative speeds (the file's own convention)",
            _ => "turning sense  mixed: the phase decreases in some runs as read and increases in others",
        });
        w.WriteLine("worst runs (misfit over its mean in the simulated replicates; about 1 is a good fit):");
        foreach (var r in c.WorstRuns)
        {
            w.WriteLine(string.Create(ic, $"  {r.File}  μ = {r.Param:G6}  {r.Ratio:F2}  model {(r.MeanResidual > 0 ? "too fast" : "too slow")} on average by {Math.Abs(r.MeanResidual):F2} (replicate RMS)"));
        }

        w.WriteLine("worst phase regions (radians, in the data's phase):");
        foreach (var g in c.WorstRegions)
        {
            w.WriteLine(string.Create(ic, $"  [{g.From:F2}, {g.To:F2})  {g.Ratio:F2}  model {(g.MeanResidual > 0 ? "too fast" : "too slow")} on average by {Math.Abs(g.MeanResidual):F2} (replicate RMS)"));
        }

        foreach (var d in c.Diagnostics)
        {
            w.WriteLine(d.ToString());
        }

        w.WriteLine(TextReport.Caution);

        return w.ToString();
    }
}
