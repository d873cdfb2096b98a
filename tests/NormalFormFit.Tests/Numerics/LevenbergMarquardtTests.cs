using System.Globalization;
using NormalFormFit.Numerics;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Numerics;

/// <summary>
/// The Levenberg–Marquardt fitter against the certified values of NIST StRD nonlinear regression datasets
/// (NistNonlinearReference: Misra1a, lower difficulty; Thurber and MGH09, higher difficulty), and its exit reasons.
/// Agreement is counted in significant digits as the log relative error LRE = −log₁₀|(estimate − certified)/certified|
/// (McCullough 1998, "Assessing the reliability of statistical software", Am. Stat. 52, the measure NIST's own
/// software studies use; citation from memory).
/// </summary>
public class LevenbergMarquardtTests(ITestOutputHelper output)
{
    public static TheoryData<string> Problems => ["Misra1a", "Thurber", "MGH09"];

    private static NistProblem Get(string name) => name switch
    {
        "Misra1a" => NistNonlinearReference.Misra1a,
        "Thurber" => NistNonlinearReference.Thurber,
        "MGH09" => NistNonlinearReference.Mgh09,
        _ => throw new ArgumentOutOfRangeException(nameof(name)),
    };

    /// <summary>Residuals rᵢ = f(xᵢ; b) − yᵢ and their Jacobian ∂f/∂b.</summary>
    internal static ResidualsAndJacobian Residuals(NistProblem p) => (double[] b, out double[] r, out double[,] j) =>
    {
        var n = p.X.Length;
        r = new double[n];
        j = new double[n, b.Length];
        var g = new double[b.Length];
        var finite = true;
        for (var i = 0; i < n; i++)
        {
            r[i] = p.Model(p.X[i], b) - p.Y[i];
            p.Gradient(p.X[i], b, g);
            finite &= double.IsFinite(r[i]) && g.All(double.IsFinite);
            for (var u = 0; u < b.Length; u++)
            {
                j[i, u] = g[u];
            }
        }

        return finite;
    };

    private static double Lre(double estimate, double certified) =>
        estimate == certified ? 15.0 : -Math.Log10(Math.Abs((estimate - certified) / certified));

    [Theory]
    [MemberData(nameof(Problems))]
    public void CertifiedEstimates_OnTheTypedData_GiveTheCertifiedResidualSumOfSquares(string name)
    {
        // Proves the data are typed right: a wrong digit in any x or y moves Σr² at the certified estimates far beyond
        // 1e-9 relative (the smallest effect, 0.001 in one Thurber y, moves it by about 5e-6 relative). The certified
        // Σr² is printed to 11 significant digits, so it agrees to 1e-9 relative with room for its rounding.
        var p = Get(name);
        Residuals(p)(p.Certified, out var r, out _);
        Assert.Equal(p.CertifiedRss, r.Sum(x => x * x), p.CertifiedRss * 1e-9);
    }

    public static TheoryData<string, int> ProblemsAndStarts => new()
    {
        { "Misra1a", 1 }, { "Misra1a", 2 }, { "Thurber", 1 }, { "Thurber", 2 }, { "MGH09", 1 }, { "MGH09", 2 },
    };

    [Theory]
    [MemberData(nameof(ProblemsAndStarts))]
    public void WithDefaultTolerances_FromEitherNistStart_ReachesTheCertifiedValuesToFourDigits(string name, int start)
    {
        // The defaults (those the model comparison uses) stop once an accepted step lowers Σr² by less than 1e-10
        // relative. Σr² is then within about 1e-10·Σr² of its minimum, and each parameter within about
        // √(1e-10·(n − k)) of its standard error: log₁₀(|b|/SE) + 5 − ½·log₁₀(n − k) digits, 4.6 for MGH09's b2
        // (|b|/SE ≈ 1), 5.1 for Thurber's b7, 6.4 for Misra1a's b2. Four digits for parameters and standard errors;
        // Σr², flat at the minimum, to nine.
        var p = Get(name);
        CheckReaches(p, start, LevenbergMarquardtOptions.Default, parameters: 4, standardErrors: 4, sumOfSquares: 9);
    }

    [Theory]
    [MemberData(nameof(ProblemsAndStarts))]
    public void WithTightTolerances_FromEitherNistStart_ReachesTheCertifiedValuesToSevenDigits(string name, int start)
    {
        // Tolerances near rounding (Σr² to 1e-15 relative): what limits the digits now is the rounding of Σr² itself,
        // about 1e-16 relative, which leaves the parameters within about 1e-8·√(n − k) of their standard errors:
        // log₁₀(|b|/SE) + 8 − ½·log₁₀(n − k) digits, 7.6 for MGH09's b2, 8.1 for Thurber's b7. Seven digits for the
        // parameters; the standard errors come from J at the estimate, whose error follows the parameters' scaled by
        // the model's curvature (Thurber's rational model loses most), so six and a half; Σr² to ten of the eleven
        // NIST prints.
        var p = Get(name);
        var tight = new LevenbergMarquardtOptions { MaxIterations = 1000, CostTolerance = 1e-15, StepTolerance = 1e-14 };
        CheckReaches(p, start, tight, parameters: 7, standardErrors: 6.5, sumOfSquares: 10);
    }

    private void CheckReaches(NistProblem p, int start, LevenbergMarquardtOptions options, double parameters, double standardErrors, double sumOfSquares)
    {
        var from = start == 1 ? p.Start1 : p.Start2;
        var copy = (double[])from.Clone();
        var fit = LevenbergMarquardt.Minimize(Residuals(p), from, options);
        var se = fit.StandardErrors;
        var parameterDigits = p.Certified.Select((c, u) => Lre(fit.Parameters[u], c)).Min();
        var seDigits = p.CertifiedSe.Select((c, u) => Lre(se[u], c)).Min();
        var rssDigits = Lre(fit.SumOfSquares, p.CertifiedRss);
        output.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"{p.Name}, start {start}: {fit.Exit} after {fit.Iterations} iterations; digits agreed (least over the parameters): estimates {parameterDigits:F1}, standard errors {seDigits:F1}, Σr² {rssDigits:F1}"));

        Assert.Equal(copy, from);
        Assert.True(fit.Converged, $"{p.Name}, start {start}: stopped with {fit.Exit}");
        Assert.True(parameterDigits >= parameters, $"{p.Name}, start {start}: estimates agree to {parameterDigits:F1} digits");
        Assert.True(seDigits >= standardErrors, $"{p.Name}, start {start}: standard errors agree to {seDigits:F1} digits");
        Assert.True(rssDigits >= sumOfSquares, $"{p.Name}, start {start}: Σr² agrees to {rssDigits:F1} digits");
    }

    [Fact]
    public void IterationLimit_ReachedFirst_IsReportedAsNotConverged()
    {
        var p = NistNonlinearReference.Thurber;
        var fit = LevenbergMarquardt.Minimize(Residuals(p), p.Start1, new LevenbergMarquardtOptions { MaxIterations = 3 });
        Assert.Equal(LevenbergMarquardtExit.MaxIterations, fit.Exit);
        Assert.False(fit.Converged);
        Assert.Equal(3, fit.Iterations);
    }

    [Fact]
    public void StartWhereTheResidualsAreNotFinite_IsReportedAsInvalidStart_WithoutIterating()
    {
        ResidualsAndJacobian broken = (double[] q, out double[] r, out double[,] j) =>
        {
            r = [double.NaN];
            j = new double[1, q.Length];
            return false;
        };
        var fit = LevenbergMarquardt.Minimize(broken, [1.0, 2.0]);
        Assert.Equal(LevenbergMarquardtExit.InvalidStart, fit.Exit);
        Assert.False(fit.Converged);
        Assert.Equal(0, fit.Iterations);
        Assert.Equal([1.0, 2.0], fit.Parameters);
        Assert.Empty(fit.Residuals);
        Assert.Null(fit.Covariance);
    }

    [Fact]
    public void NoParameters_ReturnsTheResidualsAtTheStart()
    {
        ResidualsAndJacobian constant = (double[] q, out double[] r, out double[,] j) =>
        {
            r = [3.0, 4.0];
            j = new double[2, 0];
            return true;
        };
        var fit = LevenbergMarquardt.Minimize(constant, []);
        Assert.Equal(LevenbergMarquardtExit.NoParameters, fit.Exit);
        Assert.True(fit.Converged);
        Assert.Equal(25.0, fit.SumOfSquares);
    }

    [Fact]
    public void NoAcceptableStepAtAnyDamping_IsReportedAsNoDescent()
    {
        // r(q) = q − 1 can be evaluated at q = 0 only: every trial step is refused, down to the smallest step the
        // largest damping (1e16) gives, which is still far above the refused-step tolerance at q = 0.
        ResidualsAndJacobian onlyAtZero = (double[] q, out double[] r, out double[,] j) =>
        {
            r = [q[0] - 1.0];
            j = new double[,] { { 1.0 } };
            return q[0] == 0.0;
        };
        var fit = LevenbergMarquardt.Minimize(onlyAtZero, [0.0]);
        Assert.Equal(LevenbergMarquardtExit.NoDescent, fit.Exit);
        Assert.Equal([0.0], fit.Parameters);
        Assert.Equal(1, fit.Iterations);
    }

    [Fact]
    public void Covariance_WithNoMorePointsThanParameters_IsAbsent()
    {
        // Two Misra1a points, two parameters: s² = Σr²/(n − k) is undefined.
        var p = NistNonlinearReference.Misra1a with { X = NistNonlinearReference.Misra1a.X[..2], Y = NistNonlinearReference.Misra1a.Y[..2] };
        var fit = LevenbergMarquardt.Minimize(Residuals(p), p.Start2);
        Assert.Null(fit.Covariance);
        Assert.All(fit.StandardErrors, se => Assert.True(double.IsNaN(se)));
    }
}
