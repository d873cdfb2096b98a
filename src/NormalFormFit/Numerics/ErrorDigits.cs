using System.Globalization;

namespace NormalFormFit.Numerics;

/// <summary>
/// How many decimals a value shows next to its standard error: enough for the error's second significant digit
/// (common practice, no source), e.g. 1.00031 ± 0.00042; and how a number a reader sees is written (<see cref="Plain"/>).
/// </summary>
public static class ErrorDigits
{
    /// <summary>Smallest power of ten written in plain notation: 0.000001 (five zeros after the point) still is.</summary>
    public const int PlainFromExponent = -6;

    /// <summary>First power of ten written as ×10ⁿ: numbers below 10⁶ (six digits before the point) are plain.</summary>
    public const int PlainBelowExponent = 6;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>Decimals that show the second significant digit of <paramref name="se"/>, at least <paramref name="atLeast"/>, at most 12.</summary>
    public static int Decimals(double se, int atLeast = 0) =>
        se > 0 && double.IsFinite(se) ? Math.Clamp(1 - (int)Math.Floor(Math.Log10(se)), atLeast, 12) : Math.Max(atLeast, 3);

    /// <summary>The format string ("F" and <see cref="Decimals"/>) for a value with standard error <paramref name="se"/>.</summary>
    public static string Format(double se, int atLeast = 0) => "F" + Decimals(se, atLeast).ToString(Inv);

    /// <summary>
    /// <paramref name="x"/> to <paramref name="significant"/> significant digits (0: as many as it takes to read the
    /// value back exactly; trailing zeros after the point
    /// dropped, as the general format drops them) in plain decimal notation while its power of ten lies in
    /// [<see cref="PlainFromExponent"/>, <see cref="PlainBelowExponent"/>): 0.000046, 14500, 999000; outside it as a mantissa
    /// and a power of ten written out, 7.6×10⁻⁸, 6.1×10¹⁰. Never the "E-05" of a computer format. "NaN", "∞" and "−∞"
    /// for values that are not finite. The rule is the report's (docs/glossary.md, "Numbers").
    /// </summary>
    public static string Plain(double x, int significant = 6)
    {
        if (double.IsNaN(x))
        {
            return "NaN";
        }

        if (double.IsInfinity(x))
        {
            return x > 0 ? "∞" : "−∞";
        }

        var general = significant > 0 ? x.ToString("G" + significant.ToString(Inv), Inv) : x.ToString("R", Inv);
        if (!general.Contains('E', StringComparison.Ordinal))
        {
            return general;
        }

        // The general format chose exponent notation: read its rounded mantissa and exponent back.
        var at = general.IndexOf('E', StringComparison.Ordinal);
        var mantissa = general[..at];
        var exponent = int.Parse(general[(at + 1)..], NumberStyles.AllowLeadingSign, Inv);
        if (exponent >= PlainFromExponent && exponent < PlainBelowExponent)
        {
            var rounded = double.Parse(general, NumberStyles.Float, Inv);
            var decimals = Math.Max(0, mantissa.Replace("-", string.Empty, StringComparison.Ordinal).Replace(".", string.Empty, StringComparison.Ordinal).Length - 1 - exponent);
            var plain = rounded.ToString("F" + decimals.ToString(Inv), Inv);
            return plain.Contains('.', StringComparison.Ordinal) ? plain.TrimEnd('0').TrimEnd('.') : plain;
        }

        const string Superscripts = "⁰¹²³⁴⁵⁶⁷⁸⁹";
        var power = string.Concat(Math.Abs(exponent).ToString(Inv).Select(c => Superscripts[c - '0']));
        return mantissa + "×10" + (exponent < 0 ? "⁻" : string.Empty) + power;
    }
}
