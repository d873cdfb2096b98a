namespace NormalFormFit.Numerics;

/// <summary>
/// How many decimals a value shows next to its standard error: enough for the error's second significant digit
/// (common practice, no source), e.g. 1.00031 ± 0.00042.
/// </summary>
public static class ErrorDigits
{
    /// <summary>Decimals that show the second significant digit of <paramref name="se"/>, at least <paramref name="atLeast"/>, at most 12.</summary>
    public static int Decimals(double se, int atLeast = 0) =>
        se > 0 && double.IsFinite(se) ? Math.Clamp(1 - (int)Math.Floor(Math.Log10(se)), atLeast, 12) : Math.Max(atLeast, 3);

    /// <summary>The format string ("F" and <see cref="Decimals"/>) for a value with standard error <paramref name="se"/>.</summary>
    public static string Format(double se, int atLeast = 0) => "F" + Decimals(se, atLeast).ToString(System.Globalization.CultureInfo.InvariantCulture);
}
