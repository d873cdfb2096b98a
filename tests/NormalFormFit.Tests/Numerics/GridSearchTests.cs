using NormalFormFit.Numerics;

namespace NormalFormFit.Tests.Numerics;

/// <summary>Brent's minimiser and the grid-then-Brent search against minima known in closed form.</summary>
public class GridSearchTests
{
    // Near a smooth minimum f changes only quadratically, so rounding of f (≈ 1e-16·|f|) hides the minimiser within
    // about √(2·1e-16·|f|/f'') ≈ 1.5e-8 for |f|, f'' of order one (Press et al., Numerical Recipes, 3rd ed., §10.2);
    // 1e-7 leaves a margin and still catches a minimiser off by a single grid cell or a wrong bracket.
    private const double LocationTolerance = 1e-7;

    [Fact]
    public void Brent_OnCosineAroundPi_FindsPi()
    {
        // cos x has its minimum at x = π on [2, 4] (analytic).
        var x = Brent.Minimize(Math.Cos, 2.0, 4.0, 3.0, Math.Cos(3.0), 1e-10);

        Assert.Equal(Math.PI, x, LocationTolerance);
    }

    [Fact]
    public void Brent_OnAParabola_FindsItsVertex()
    {
        // (x − 0.3)² + 1 has its vertex at 0.3 (analytic); a parabolic step lands on it at once.
        static double F(double x) => ((x - 0.3) * (x - 0.3)) + 1.0;
        var x = Brent.Minimize(F, -1.0, 2.0, 1.0, F(1.0), 1e-10);

        Assert.Equal(0.3, x, LocationTolerance);
    }

    [Fact]
    public void Minimize_OnATiltedSine_FindsTheGlobalOfTwoLocalMinima()
    {
        // f(x) = sin x + x/20 on [0, 12]: f'(x) = cos x + 1/20 = 0 with f'' = −sin x > 0 at x = 3π/2 − asin(1/20) and
        // at that plus 2π; f is lower at the first (by 2π/20), so the global minimum is x* = 3π/2 − asin(0.05)
        // (analytic). A local search started at the right end would stop at the second.
        static double F(double x) => Math.Sin(x) + (x / 20.0);
        var expected = (1.5 * Math.PI) - Math.Asin(0.05);

        var min = GridSearch.Minimize(F, 0.0, 12.0, 25, 1e-10);

        Assert.Equal(expected, min.X, LocationTolerance);
        Assert.Equal(F(expected), min.Value, 1e-14);
        Assert.False(min.OnEdge);
    }

    [Fact]
    public void Minimize_OfAnIncreasingFunction_ReportsTheMinimumOnTheEdge()
    {
        var min = GridSearch.Minimize(x => x, 0.0, 1.0, 11, 1e-10);

        Assert.Equal(0, min.GridIndex);
        Assert.True(min.OnEdge);
        Assert.Equal(0.0, min.X);
    }

    [Fact]
    public void Minimize_OfAFunctionNowhereFinite_ReportsNoGridPoint()
    {
        var min = GridSearch.Minimize(_ => double.NaN, 0.0, 1.0, 11, 1e-10);

        Assert.Equal(-1, min.GridIndex);
        Assert.True(double.IsNaN(min.X));
        Assert.Equal(double.PositiveInfinity, min.Value);
    }
}
