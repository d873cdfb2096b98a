using System.Globalization;
using MathNet.Numerics.Distributions;

namespace NormalFormFit.Tests;

/// <summary>
/// The second side of a seeded coverage check: the estimates lie on both sides of the truth (two-sided exact sign test,
/// p ≥ 0.01) and the root-mean-square of z = (estimate − truth)/se is at least √(χ²_R(0.001)/R) (MathNet's
/// <c>ChiSquared.InvCDF</c>), so that intervals about 1.5 times too wide fail as well as too narrow ones fail the band.
/// </summary>
internal static class CalibrationChecks
{
    /// <summary>Asserts sign balance and the RMS-z floor for the z of <paramref name="z"/>; returns the line it checked.</summary>
    public static string AssertBalancedAndNotTooWide(IReadOnlyList<double> z)
    {
        var n = z.Count;
        var above = z.Count(v => v > 0);
        var p = Analysis.CalibrationMatrixTests.SignTestP(above, n);
        var rms = Math.Sqrt(z.Average(v => v * v));
        var floor = Math.Sqrt(ChiSquared.InvCDF(n, 0.001) / n);
        var line = string.Create(CultureInfo.InvariantCulture, $"{above} of {n} above the truth (sign test p {p:F3}); RMS z {rms:F2} (floor {floor:F2})");
        Assert.True(p >= 0.01, "estimates on one side of the truth: " + line);
        Assert.True(rms >= floor, "intervals too wide: " + line);
        return line;
    }
}
