using NormalFormFit.Numerics;

namespace NormalFormFit.Tests.Numerics;

/// <summary>Bisection, the outward walk and Illinois regula falsi against roots known in closed form.</summary>
public class RootFindingTests
{
    [Fact]
    public void Bisect_OnXSquaredMinusTwo_FindsSquareRootOfTwoToTheAbsoluteStop()
    {
        // x² − 2 = 0 at √2 (analytic; Math.Sqrt is correctly rounded). The midpoint of a final bracket no wider than
        // 1e-13 lies within 0.5e-13 of the root.
        var x = RootFinding.Bisect(v => (v * v) - 2.0, 1.0, 2.0, new BisectionStop(1e-13, 0.0, 200));

        Assert.InRange(x, Math.Sqrt(2.0) - 0.5e-13, Math.Sqrt(2.0) + 0.5e-13);
    }

    [Fact]
    public void Bisect_WithARelativeStop_ScalesTheStopWithTheRoot()
    {
        // ln x − 10 = 0 at e¹⁰ (analytic). The stop 1e-13·(1 + |x|) is about 2.2e-9 there: an absolute 1e-13 would
        // be below the spacing of doubles near 2·10⁴ (3.6e-12) and could never be met.
        var stop = new BisectionStop(0.0, 1e-13, 200);
        var x = RootFinding.Bisect(v => Math.Log(v) - 10.0, 1.0, 1e5, stop);

        Assert.Equal(Math.Exp(10.0), x, 0.5 * stop.Width(Math.Exp(10.0)));
    }

    [Fact]
    public void Bisect_WhenTheOutsideEndIsTheLowerOne_StillConverges()
    {
        // 1 − x³ is positive left of its root 1 (analytic): the outside end is the left one.
        var x = RootFinding.Bisect(v => 1.0 - (v * v * v), 3.0, -2.0, new BisectionStop(1e-12, 0.0, 200));

        Assert.Equal(1.0, x, 1e-12);
    }

    [Fact]
    public void Bisect_StopsAfterMaxIterations()
    {
        // 10 halvings of [0, 1024] leave a bracket of width 1 around the root 700.5 of x − 700.5: [700, 701].
        var x = RootFinding.Bisect(v => v - 700.5, 0.0, 1024.0, new BisectionStop(0.0, 0.0, 10));

        Assert.Equal(700.5, x);
    }

    [Fact]
    public void GeometricOffsets_GrowFromTheStartUntilTheMaximumOffset()
    {
        // Offsets 1, 2, 4, 8 (16 > 10 ends the walk), in direction −1 from 3.
        var probes = RootFinding.GeometricOffsets(3.0, -1, 1.0, 2.0, 10.0).ToArray();

        Assert.Equal([2.0, 1.0, -1.0, -5.0], probes);
    }

    [Fact]
    public void GeometricSteps_AddGrowingStepsAndEndAtTheLimit()
    {
        // Steps 1, 2, 4 give 1, 3, 7; the next step (8) would reach 15 ≥ 10, so the limit 10 is the last probe.
        var probes = RootFinding.GeometricSteps(0.0, +1, 1.0, 2.0, 10.0).ToArray();

        Assert.Equal([1.0, 3.0, 7.0, 10.0], probes);
    }

    [Theory]
    [InlineData(+1, 2.0)]
    [InlineData(-1, -2.0)]
    public void FirstCrossing_WalkingOutFromInside_FindsTheRootOnThatSide(int direction, double root)
    {
        // x² − 4 ≤ 0 on [−2, 2]; its roots ±2 (analytic).
        var stop = new BisectionStop(1e-13, 0.0, 200);
        var x = RootFinding.FirstCrossing(v => (v * v) - 4.0, 0.0, RootFinding.GeometricOffsets(0.0, direction, 1e-3, 1.25, 100.0), stop);

        Assert.Equal(root, x, 1e-13);
    }

    [Fact]
    public void FirstCrossing_WhenNoProbeIsOutside_IsNaN()
    {
        // The walk ends at offset 1 from 0, before the root at 2.
        var x = RootFinding.FirstCrossing(v => (v * v) - 4.0, 0.0, RootFinding.GeometricSteps(0.0, +1, 0.1, 1.5, 1.0), new BisectionStop(1e-13, 0.0, 200));

        Assert.True(double.IsNaN(x));
    }

    [Fact]
    public void FirstCrossing_FindsTheCrossingAtTheLimitProbe()
    {
        // The root 2 lies between the last free probe and the limit 2.5: the limit is probed and bracketed.
        var x = RootFinding.FirstCrossing(v => v - 2.0, 0.0, RootFinding.GeometricSteps(0.0, +1, 1.0, 10.0, 2.5), new BisectionStop(1e-13, 0.0, 200));

        Assert.Equal(2.0, x, 1e-13);
    }

    [Theory]
    [InlineData(2.0)]
    [InlineData(10.0)]
    [InlineData(0.001)]
    public void RegulaFalsi_OnXCubedMinusA_FindsTheCubeRoot(double a)
    {
        // x³ − a = 0 at ∛a (analytic; Math.Cbrt). The stop is a bracket narrower than 1e-12·max(1, |x|), or an exact
        // zero; the secant point then is within that of the root.
        var x = RootFinding.RegulaFalsi(v => (v * v * v) - a, 0.0, -a, 3.0, 27.0 - a);

        Assert.Equal(Math.Cbrt(a), x, 1e-12 * Math.Max(1.0, Math.Cbrt(a)));
    }

    [Fact]
    public void RegulaFalsi_OnCosXMinusX_FindsTheDottieNumber()
    {
        // cos x = x at 0.7390851332151607 (the Dottie number, OEIS A003957; from memory); the residual check does not
        // rely on the recalled digits.
        var x = RootFinding.RegulaFalsi(v => Math.Cos(v) - v, 0.0, 1.0, 1.0, Math.Cos(1.0) - 1.0);

        Assert.Equal(0.7390851332151607, x, 1e-12);
        Assert.InRange(Math.Cos(x) - x, -1e-12, 1e-12);
    }

    [Fact]
    public void RegulaFalsi_OnAStronglyConvexFunction_ConvergesInFewEvaluations()
    {
        // x¹⁰ − 1 on [0, 1.5] (root 1): plain regula falsi keeps the right end for hundreds of steps and creeps in
        // from the left; the Illinois halving (Dowell & Jarratt 1971) brings it in within a few dozen evaluations.
        var evaluations = 0;
        var x = RootFinding.RegulaFalsi(
            v =>
            {
                evaluations++;
                return Math.Pow(v, 10) - 1.0;
            },
            0.0,
            -1.0,
            1.5,
            Math.Pow(1.5, 10) - 1.0);

        Assert.Equal(1.0, x, 1e-12);
        Assert.InRange(evaluations, 1, 40);
    }

    [Fact]
    public void RegulaFalsi_WithAZeroAtAnEnd_ReturnsThatEnd()
    {
        var evaluations = 0;
        double G(double v)
        {
            evaluations++;
            return v - 1.0;
        }

        Assert.Equal(1.0, RootFinding.RegulaFalsi(G, 1.0, 0.0, 2.0, 1.0));
        Assert.Equal(1.0, RootFinding.RegulaFalsi(G, 0.0, -1.0, 1.0, 0.0));
        Assert.Equal(0, evaluations);
    }

    [Fact]
    public void RegulaFalsi_WhereTheFunctionIsNotFinite_IsNaN()
    {
        // The first secant point of [−1, 1] with g(±1) = ±1 is 0, where g is not finite.
        var x = RootFinding.RegulaFalsi(v => v == 0 ? double.NaN : v, -1.0, -1.0, 1.0, 1.0);

        Assert.True(double.IsNaN(x));
    }
}
