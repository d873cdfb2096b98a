using NormalFormFit.Numerics;

namespace NormalFormFit.Tests.Numerics;

/// <summary>
/// The GCV search's scan and refinement on score curves whose minimum is known. Its use by the two smoothers is checked
/// against SciPy in the Smoothing tests; here the rules of the scan itself.
/// </summary>
public class GcvSearchTests
{
    // The search stops Brent at 1e-3 in log₁₀ λ, so a minimum is located to about that: 2e-3 is the tolerance.
    private const double Tolerance = 2e-3;

    private static readonly GcvScan Scan = new(Start: -4.0, Step: 1.0, End: 12.0, RefineFloor: -4.0);

    // A score with its minimum at log₁₀ λ = m, the trace falling from n = 100 towards 2 as λ grows.
    private static GcvTrial Parabola(double x, double m) => new(true, 1.0 + ((x - m) * (x - m)), 2.0 + (98.0 / (1.0 + Math.Pow(10.0, x))));

    // 4.4: the trace falls below 2.001 at x = 5, which ends the scan there; the refinement still finds the vertex.
    [Theory]
    [InlineData(1.3)]
    [InlineData(-2.7)]
    [InlineData(4.4)]
    public void MinimizeLog10Lambda_OfAParabolicScore_FindsItsVertex(double vertex)
    {
        var best = GcvSearch.MinimizeLog10Lambda(x => Parabola(x, vertex), Scan);

        Assert.Equal(vertex, best, Tolerance);
    }

    [Fact]
    public void MinimizeLog10Lambda_StopsScanningOnceTheScoreHasClimbedTwice()
    {
        // Vertex at 0: the score exceeds twice the best (1) from |x| ≥ 1.01, i.e. at x = 2 and x = 3; the scan stops
        // there rather than running on to 12 (the rule in GcvSearch; common practice, no source).
        var scanned = new List<double>();
        var best = GcvSearch.MinimizeLog10Lambda(
            x =>
            {
                scanned.Add(x);
                return Parabola(x, 0.0);
            },
            Scan);

        Assert.Equal(0.0, best, Tolerance);
        Assert.Equal([-4.0, -3.0, -2.0, -1.0, 0.0, 1.0, 2.0, 3.0], scanned.Take(8));
        Assert.All(scanned.Skip(8), x => Assert.InRange(x, -1.0, 1.0));
    }

    [Fact]
    public void MinimizeLog10Lambda_StopsWhereTheFitBecomesAStraightLine()
    {
        // The score keeps falling, but from x = 2 on tr A < 2.001: larger λ cannot change the fit, so no point beyond
        // 2 is tried, and the best is the last point scanned.
        var best = GcvSearch.MinimizeLog10Lambda(
            x => new GcvTrial(true, 10.0 - x, x >= 2.0 ? 2.0005 : 5.0),
            Scan);

        Assert.Equal(2.0, best);
    }

    [Fact]
    public void MinimizeLog10Lambda_NeverTriesBeyondTheFirstUnusablePoint()
    {
        // Unusable from x = 1.5 on (as when the system loses positive definiteness): the scan stops at 2 and the
        // refinement stays at or below the last usable point, 1.
        var tried = new List<double>();
        var best = GcvSearch.MinimizeLog10Lambda(
            x =>
            {
                tried.Add(x);
                return x < 1.5 ? Parabola(x, 5.0) : new GcvTrial(false, double.NaN, double.NaN);
            },
            Scan);

        Assert.Equal(1.0, best);
        Assert.All(tried, x => Assert.True(x <= 2.0));
    }

    [Fact]
    public void MinimizeLog10Lambda_RefinesBelowTheScanOnlyWithoutAFloor()
    {
        // Vertex at −4.5, below the scan's start −4: with the floor at the start the answer is −4; without a floor
        // the refinement may go one step below the start and finds the vertex.
        var floored = GcvSearch.MinimizeLog10Lambda(x => Parabola(x, -4.5), Scan);
        var free = GcvSearch.MinimizeLog10Lambda(x => Parabola(x, -4.5), Scan with { RefineFloor = double.NegativeInfinity });

        Assert.Equal(-4.0, floored, Tolerance);
        Assert.Equal(-4.5, free, Tolerance);
    }

    [Fact]
    public void MinimizeLog10Lambda_WithNoUsablePoint_IsNaN()
    {
        var best = GcvSearch.MinimizeLog10Lambda(_ => new GcvTrial(false, double.NaN, double.NaN), Scan);

        Assert.True(double.IsNaN(best));
    }
}
