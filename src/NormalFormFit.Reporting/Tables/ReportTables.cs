using System.Globalization;
using System.Text;
using NormalFormFit.Analysis;

namespace NormalFormFit.Reporting.Tables;

/// <summary>
/// The report's tables as CSV (RFC 4180 quoting, invariant culture, round-trip numbers, empty cell for a missing
/// value): <c>runs.csv</c>, one row per run, and <c>field.csv</c>, the reconstructed θ̇(θ) of every run with its band.
/// </summary>
public static class ReportTables
{
    /// <summary>Columns of runs.csv (a contract for scripts: new columns may be appended, none renamed).</summary>
    public static IReadOnlyList<string> RunColumns { get; } =
    [
        "file", "param", "label", "samples", "turns", "bottleneck_phase", "bottleneck_phase_se", "a", "a_se", "b", "b_se",
        "half_window", "period_measured", "period_measured_se", "period_from_bottleneck", "period_from_field",
        "period_from_field_se", "revolutions", "noise_sd", "flags",
        "rows_dropped_blank", "rows_dropped_low_quality", "rows_dropped_off_orbit", "rows_dropped_phase_jumps", "rows_dropped_total",
    ];

    /// <summary>Columns of field.csv.</summary>
    public static IReadOnlyList<string> FieldColumns { get; } =
        ["file", "param", "phase", "velocity", "velocity_se", "band95_low", "band95_high"];

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>runs.csv: one row per run in manifest order; flags separated by ';'.</summary>
    public static string Runs(AnalysisReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        var sb = new StringBuilder();
        Row(sb, RunColumns);
        foreach (var r in report.Runs)
        {
            var b = r.Bottleneck;
            var p = r.Period;
            Row(sb,
            [
                r.File, N(r.Param), r.Label ?? string.Empty, r.Samples.ToString(Inv), N(r.Turns),
                N(b?.Phase.Value), N(b?.Phase.StandardError), N(b?.A.Value), N(b?.A.StandardError), N(b?.B.Value), N(b?.B.StandardError),
                N(b?.HalfWidth), N(p?.Measured.Value), N(p?.Measured.StandardError), N(p?.FromBottleneck.Value), N(p?.FromField.Value),
                N(p?.FromField.StandardError), (p?.Revolutions ?? 0).ToString(Inv), N(r.Smoothing?.NoiseSd), string.Join(";", report.FlagsOf(r).Select(WireNames.Of)),
                r.Dropped.Blank.ToString(Inv), r.Dropped.LowQuality.ToString(Inv), r.Dropped.OffOrbit.ToString(Inv),
                r.Dropped.PhaseJumps.ToString(Inv), r.Dropped.Total.ToString(Inv),
            ]);
        }

        return sb.ToString();
    }

    /// <summary>field.csv: every bin of every run's field with its pointwise 95% band (θ̇ ± 1.96 s.e.).</summary>
    public static string Field(AnalysisReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        var sb = new StringBuilder();
        Row(sb, FieldColumns);
        foreach (var r in report.Runs)
        {
            if (r.Field is not { } f)
            {
                continue;
            }

            for (var j = 0; j < f.Centres.Length; j++)
            {
                var v = f.Velocity[j];
                var se = f.StandardError[j];
                Row(sb, [r.File, N(r.Param), N(f.Centres[j]), N(v), N(se), N(v - (1.96 * se)), N(v + (1.96 * se))]);
            }
        }

        return sb.ToString();
    }

    private static void Row(StringBuilder sb, IReadOnlyList<string> cells)
    {
        for (var i = 0; i < cells.Count; i++)
        {
            if (i > 0)
            {
                sb.Append(',');
            }

            sb.Append(Quote(cells[i]));
        }

        sb.Append("\r\n");
    }

    /// <summary>RFC 4180: a field holding a comma, quote or line break is quoted, inner quotes doubled.</summary>
    internal static string Quote(string cell) =>
        cell.AsSpan().IndexOfAny(",\"\r\n") >= 0 ? "\"" + cell.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"" : cell;

    private static string N(double? x) => x is { } v && double.IsFinite(v) ? v.ToString("R", Inv) : string.Empty;
}
