namespace NormalFormFit.Numerics;

/// <summary>The outcome of <see cref="GridSearch.Minimize"/>.</summary>
/// <param name="X">The minimiser found.</param>
/// <param name="Value">f at <see cref="X"/>.</param>
/// <param name="GridIndex">Index of the best grid point (−1 when f was nowhere finite); 0 or the last index mean the
/// minimum lies on the edge of the range.</param>
/// <param name="GridPoints">Number of grid points.</param>
internal readonly record struct GridMinimum(double X, double Value, int GridIndex, int GridPoints)
{
    /// <summary>True when the best grid point is an end of the range (the minimum may lie outside it).</summary>
    public bool OnEdge => GridIndex <= 0 || GridIndex >= GridPoints - 1;
}

/// <summary>
/// One-dimensional minimisation of a possibly multimodal function on [lo, hi]: an even grid, then Brent's method
/// (Brent 1973, ch. 5) between the best grid point's neighbours. Cost: grid + O(log(1/tolerance)) evaluations.
/// </summary>
internal static class GridSearch
{
    public static GridMinimum Minimize(Func<double, double> f, double lo, double hi, int grid, double tolerance)
    {
        var bestK = -1;
        var bestV = double.PositiveInfinity;
        var step = (hi - lo) / (grid - 1);
        for (var k = 0; k < grid; k++)
        {
            var v = f(lo + (k * step));
            if (v < bestV)
            {
                bestV = v;
                bestK = k;
            }
        }

        if (bestK < 0)
        {
            return new GridMinimum(double.NaN, double.PositiveInfinity, -1, grid);
        }

        var xBest = lo + (bestK * step);
        var a = lo + (Math.Max(bestK - 1, 0) * step);
        var b = lo + (Math.Min(bestK + 1, grid - 1) * step);
        var x = Brent.Minimize(f, a, b, xBest, bestV, tolerance);
        var fx = f(x);
        return fx <= bestV ? new GridMinimum(x, fx, bestK, grid) : new GridMinimum(xBest, bestV, bestK, grid);
    }
}
