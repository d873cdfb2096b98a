using System.Globalization;

namespace NormalFormFit.Reporting;

/// <summary>Number formatting of the HTML page and the figures: invariant culture, en dash for a missing value.</summary>
internal static class ReportNumbers
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary><paramref name="digits"/> significant digits, plain notation by the report's rule (<see cref="NormalFormFit.Numerics.ErrorDigits.Plain"/>).</summary>
    public static string G(double x, int digits = 6) => double.IsFinite(x) ? NormalFormFit.Numerics.ErrorDigits.Plain(x, digits) : "–";

    /// <summary>An interval bound, ±∞ when unbounded.</summary>
    public static string Bound(double x) => double.IsFinite(x) ? G(x) : double.IsNaN(x) ? "–" : (x > 0 ? "+∞" : "−∞");

    /// <summary>
    /// A value with its standard error, the value rounded to the error's second significant digit
    /// (common practice, no source), e.g. <c>1.00031 ± 0.00042</c>.
    /// </summary>
    public static string WithError(double value, double se)
    {
        if (!double.IsFinite(value))
        {
            return "–";
        }

        if (!(se > 0) || !double.IsFinite(se))
        {
            return G(value);
        }

        var fmt = "F" + Decimals(se).ToString(Inv);
        return value.ToString(fmt, Inv) + " ± " + se.ToString(fmt, Inv);
    }

    /// <summary>An interval [low, high] with as many decimals as <see cref="WithError"/> gives its value.</summary>
    public static string Interval(Interval ci, double se)
    {
        string B(double x) => !double.IsFinite(x) ? Bound(x)
            : se > 0 && double.IsFinite(se) ? x.ToString("F" + Decimals(se).ToString(Inv), Inv) : G(x);
        return "[" + B(ci.Low) + ", " + B(ci.High) + "]";
    }

    /// <summary>A value rounded as <see cref="WithError"/> rounds it, without the error.</summary>
    public static string Rounded(double value, double se) =>
        !double.IsFinite(value) ? "–" : se > 0 && double.IsFinite(se) ? value.ToString("F" + Decimals(se).ToString(Inv), Inv) : G(value);

    /// <summary>
    /// <paramref name="digits"/> significant digits in plain notation, and far from 1 as a power of ten written out
    /// (7.63×10¹⁰), never the "E+10" of a computer format (<see cref="NormalFormFit.Numerics.ErrorDigits.Plain"/>).
    /// </summary>
    public static string Plain(double x, int digits = 3) => G(x, digits);

    private static int Decimals(double se) => NormalFormFit.Numerics.ErrorDigits.Decimals(se);
}

/// <summary>
/// The suggested next runs in words shared by the text, the page and the figures: where (μ to the second significant
/// digit of its distance from the route's onset; the optimum is flat, more digits would only look precise) and what
/// they are expected to do to the route's reported 95% interval.
/// </summary>
internal static class NextRunWording
{
    /// <summary>The suggested μ, rounded to the second significant digit of its distance from the route's onset.</summary>
    public static string Param(NormalFormFit.Onset.NextMeasurement m, NormalFormFit.Analysis.AnalysisReport report)
    {
        var route = m.Route == NormalFormFit.Onset.OnsetRoute.Bottleneck ? report.FromBottleneck : report.FromPeriod;
        var distance = route.IsAvailable ? Math.Abs(m.Param - route.Value) : double.NaN;
        return ReportNumbers.Rounded(m.Param, distance);
    }

    /// <summary>
    /// The expected narrowing of the route's interval in percent: one less the ratio of the expected to the current
    /// half-width, both in the planner's linear (delta-method) approximation, so that the ratio is not mixed with the
    /// reported (Fieller or profile) interval's shape. NaN when either width is not finite.
    /// </summary>
    public static double NarrowingPercent(NormalFormFit.Onset.NextMeasurement m) =>
        m.CurrentCi95.Width > 0 && double.IsFinite(m.CurrentCi95.Width) && double.IsFinite(m.ExpectedCi95.Width)
            ? 100 * (1 - (m.ExpectedCi95.Width / m.CurrentCi95.Width))
            : double.NaN;

    /// <summary>"about 43% narrower" (whole percent), or "–" when unknown.</summary>
    public static string Narrowing(NormalFormFit.Onset.NextMeasurement m)
    {
        var p = NarrowingPercent(m);
        return double.IsFinite(p) ? "about " + Math.Round(p).ToString("F0", System.Globalization.CultureInfo.InvariantCulture) + "% narrower" : "–";
    }
}
