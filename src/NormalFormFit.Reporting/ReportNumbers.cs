using System.Globalization;

namespace NormalFormFit.Reporting;

/// <summary>Number formatting of the HTML page and the figures: invariant culture, en dash for a missing value.</summary>
internal static class ReportNumbers
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>General format with <paramref name="digits"/> significant digits.</summary>
    public static string G(double x, int digits = 6) => double.IsFinite(x) ? x.ToString("G" + digits.ToString(Inv), Inv) : "–";

    /// <summary>An interval bound, ±∞ when unbounded.</summary>
    public static string Bound(double x) => double.IsFinite(x) ? x.ToString("G6", Inv) : double.IsNaN(x) ? "–" : (x > 0 ? "+∞" : "−∞");

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

    private static int Decimals(double se) => NormalFormFit.Numerics.ErrorDigits.Decimals(se);
}
