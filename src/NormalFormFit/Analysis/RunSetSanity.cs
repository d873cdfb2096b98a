using System.Globalization;

namespace NormalFormFit.Analysis;

/// <summary>
/// Run sets that cannot support an onset interval, refused before any fit (docs/data-safety.md, clause 8): the same
/// recording under different parameter values, and parameter values whose arithmetic is not meaningful in double
/// precision. Both give exit code 3 ("valid input, cannot answer") with the reason, never an interval.
/// </summary>
public static class RunSetSanity
{
    /// <summary>Largest |μ| accepted (1e15: beyond it μ's spacing in double precision is of order 0.1 and a span of μ's loses its digits).</summary>
    public const double MaxAbsParam = 1e15;

    /// <summary>Smallest span of μ relative to the largest |μ| (1e-12: below it the differences μ − μc keep fewer than four significant digits).</summary>
    public const double MinRelativeSpan = 1e-12;

    /// <summary>Codes of this class's diagnostics: they mean "cannot answer" (exit code 3).</summary>
    public static IReadOnlySet<string> Codes { get; } = new HashSet<string>(StringComparer.Ordinal) { "same-data", "absurd-params", "same-periods" };

    /// <summary>Largest relative spread of the measured periods that counts as "all the same" (10⁻⁹: far below any measurement's error).</summary>
    public const double SamePeriodTolerance = 1e-9;

    /// <summary>Null when the parameter values can be fitted; else the reason (code <c>absurd-params</c>).</summary>
    /// <param name="values">The μ of every run.</param>
    /// <param name="source">The manifest or run-lines file, named in the message.</param>
    public static Diagnostic? Parameters(IReadOnlyList<double> values, string source)
    {
        ArgumentNullException.ThrowIfNull(values);
        if (values.Count == 0)
        {
            return null;
        }

        var max = values.Max();
        var min = values.Min();
        var largest = values.Max(Math.Abs);
        var ic = CultureInfo.InvariantCulture;
        if (!double.IsFinite(max - min) || largest > MaxAbsParam)
        {
            return new Diagnostic(Severity.Error, "absurd-params",
                string.Create(ic, $"parameter values as large as {Numerics.ErrorDigits.Plain(largest, 4)} cannot be fitted (|μ| must stay below 10¹⁵); give μ in units where the runs' values are moderate (e.g. subtract a reference value)"),
                source);
        }

        if (values.Count > 1 && max - min < MinRelativeSpan * largest)
        {
            return new Diagnostic(Severity.Error, "absurd-params",
                string.Create(ic, $"the parameter values span {Numerics.ErrorDigits.Plain(max - min, 3)}, less than {Numerics.ErrorDigits.Plain(MinRelativeSpan, 0)} of their size {Numerics.ErrorDigits.Plain(largest, 6)}: double precision cannot resolve the differences; give μ relative to a reference value"),
                source);
        }

        return null;
    }

    /// <summary>
    /// Null unless three or more turning runs all have the same measured period to <see cref="SamePeriodTolerance"/>
    /// (code <c>same-periods</c>): the period then does not depend on μ and no onset can be read from it, as when
    /// the sample times are read as event times (<c>--kind events</c> on a column that is evenly spaced).
    /// </summary>
    /// <param name="runs">The analysed runs.</param>
    /// <param name="source">The manifest or run-lines file, named in the message.</param>
    public static Diagnostic? SamePeriods(IReadOnlyList<RunResult> runs, string source)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var periods = runs.Where(r => r.IsTurning && r.Period is not null && double.IsFinite(r.Period.Measured.Value) && r.Period.Measured.Value > 0)
            .Select(r => r.Period!.Measured.Value).ToList();
        if (periods.Count < 3 || runs.Select(r => r.Param).Distinct().Count() < 2)
        {
            return null;
        }

        var min = periods.Min();
        var max = periods.Max();
        return max - min <= SamePeriodTolerance * max
            ? new Diagnostic(Severity.Error, "same-periods",
                string.Create(CultureInfo.InvariantCulture,
                    $"every run has the same period, {Numerics.ErrorDigits.Plain(max, 6)}, to {Numerics.ErrorDigits.Plain(SamePeriodTolerance, 0)}: it does not change with the parameter, so the runs show no approach to an onset; check --kind and the columns (evenly spaced sample times read as event times give this)"),
                source)
            : null;
    }

    /// <summary>
    /// Null when no two runs hold the same recording; else the reason (code <c>same-data</c>) naming both.
    /// </summary>
    /// <param name="runs">Each run's file as named in the manifest, its μ and a hash of its content.</param>
    /// <param name="source">The manifest, named in the message.</param>
    public static Diagnostic? SameData(IReadOnlyList<(string File, double Param, string Hash, int Line)> runs, string source)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var seen = new Dictionary<string, (string File, double Param, int Line)>(StringComparer.Ordinal);
        foreach (var r in runs)
        {
            if (seen.TryGetValue(r.Hash, out var first))
            {
                return new Diagnostic(Severity.Error, "same-data",
                    string.Create(CultureInfo.InvariantCulture,
                        $"the run at param {r.Param:R} ('{r.File}') holds the same data, byte for byte, as the run at param {first.Param:R} (line {first.Line}, '{first.File}'): one recording cannot show two parameter values; give each run its own recording"),
                    source, r.Line);
            }

            seen[r.Hash] = (r.File, r.Param, r.Line);
        }

        return null;
    }
}
