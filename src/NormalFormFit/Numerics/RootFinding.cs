namespace NormalFormFit.Numerics;

/// <summary>When bisection stops: after <paramref name="MaxIterations"/> halvings, or once the bracket is no wider
/// than <paramref name="Absolute"/> + <paramref name="Relative"/>·(1 + |inside end|).</summary>
/// <param name="Absolute">Absolute width.</param>
/// <param name="Relative">Width per unit of the inside end's magnitude (0 for a purely absolute stop).</param>
/// <param name="MaxIterations">Most halvings.</param>
internal readonly record struct BisectionStop(double Absolute, double Relative, int MaxIterations)
{
    /// <summary>The width below which the bracket [inside, outside] counts as solved.</summary>
    public double Width(double inside) => Relative == 0.0 ? Absolute : Absolute + (Relative * (1.0 + Math.Abs(inside)));
}

/// <summary>
/// Roots of a function of one variable: bisection on a bracket, an outward walk that finds the bracket first, and
/// regula falsi in the Illinois variant.
/// </summary>
/// <remarks>
/// Bisection halves a bracket with a sign change until it is narrow (Press et al., Numerical Recipes, 3rd ed., 2007,
/// §9.1): linear convergence, one evaluation per halving, never fails on a true bracket. The walk probes outward from
/// a point where f ≤ 0 until f &gt; 0 (the edge of a test-inversion interval: where a statistic first exceeds its
/// threshold). The Illinois variant of regula falsi (Dowell &amp; Jarratt 1971, BIT 11, 168–174) halves the
/// retained end's value when the same end is kept twice, which restores superlinear convergence (order ≈ 1.44) on
/// convex functions where plain regula falsi stalls.
/// </remarks>
internal static class RootFinding
{
    /// <summary>
    /// Bisection between <paramref name="inside"/> (f ≤ 0 there, or NaN) and <paramref name="outside"/> (f &gt; 0):
    /// the midpoint of the final bracket. A midpoint with f &gt; 0 replaces the outside end, any other the inside end.
    /// </summary>
    public static double Bisect(Func<double, double> f, double inside, double outside, BisectionStop stop)
    {
        ArgumentNullException.ThrowIfNull(f);
        for (var k = 0; k < stop.MaxIterations && Math.Abs(outside - inside) > stop.Width(inside); k++)
        {
            var mid = 0.5 * (inside + outside);
            if (f(mid) > 0)
            {
                outside = mid;
            }
            else
            {
                inside = mid;
            }
        }

        return 0.5 * (inside + outside);
    }

    /// <summary>
    /// The first crossing of f from ≤ 0 to &gt; 0 walking from <paramref name="start"/> (f ≤ 0 there) through
    /// <paramref name="probes"/>: bisection between the first probe with f &gt; 0 and the point before it. NaN when no
    /// probe has f &gt; 0.
    /// </summary>
    public static double FirstCrossing(Func<double, double> f, double start, IEnumerable<double> probes, BisectionStop stop)
    {
        ArgumentNullException.ThrowIfNull(f);
        ArgumentNullException.ThrowIfNull(probes);
        var inside = start;
        foreach (var probe in probes)
        {
            if (f(probe) > 0)
            {
                return Bisect(f, inside, probe, stop);
            }

            inside = probe;
        }

        return double.NaN;
    }

    /// <summary>
    /// Probes start + direction·sₖ at geometrically growing offsets sₖ = <paramref name="firstOffset"/>·growthᵏ
    /// while sₖ ≤ <paramref name="maxOffset"/>.
    /// </summary>
    public static IEnumerable<double> GeometricOffsets(double start, int direction, double firstOffset, double growth, double maxOffset)
    {
        for (var offset = firstOffset; offset <= maxOffset; offset *= growth)
        {
            yield return start + (direction * offset);
        }
    }

    /// <summary>
    /// Probes that each move on from the previous one by a geometrically growing step
    /// (<paramref name="firstStep"/>·growthᵏ) in <paramref name="direction"/>; the first probe at or past
    /// <paramref name="limit"/> is replaced by <paramref name="limit"/> and ends the walk.
    /// </summary>
    public static IEnumerable<double> GeometricSteps(double start, int direction, double firstStep, double growth, double limit)
    {
        var at = start;
        for (var step = firstStep; ; step *= growth)
        {
            var probe = at + (direction * step);
            if (direction * (probe - limit) >= 0)
            {
                yield return limit;
                yield break;
            }

            yield return probe;
            at = probe;
        }
    }

    /// <summary>
    /// Regula falsi, Illinois variant, on a bracket [a, b] with g(a) = <paramref name="ga"/> and g(b) =
    /// <paramref name="gb"/> of opposite signs (either may be 0, which is returned as the root). Stops when the
    /// bracket is narrower than <paramref name="relativeTolerance"/>·max(1, |c|) or g(c) = 0 at the latest secant
    /// point c; after <paramref name="maxIterations"/> returns the next secant point. NaN when g is not finite at a
    /// secant point.
    /// </summary>
    public static double RegulaFalsi(
        Func<double, double> g, double a, double ga, double b, double gb, double relativeTolerance = 1e-12, int maxIterations = 100)
    {
        ArgumentNullException.ThrowIfNull(g);
        if (ga == 0)
        {
            return a;
        }

        if (gb == 0)
        {
            return b;
        }

        var side = 0;
        for (var i = 0; i < maxIterations; i++)
        {
            var c = ((a * gb) - (b * ga)) / (gb - ga);
            var gc = g(c);
            if (!double.IsFinite(gc))
            {
                return double.NaN;
            }

            if (Math.Abs(b - a) < relativeTolerance * Math.Max(1.0, Math.Abs(c)) || gc == 0)
            {
                return c;
            }

            if (Math.Sign(gc) == Math.Sign(gb))
            {
                b = c;
                gb = gc;
                if (side == -1)
                {
                    ga *= 0.5;
                }

                side = -1;
            }
            else
            {
                a = c;
                ga = gc;
                if (side == 1)
                {
                    gb *= 0.5;
                }

                side = 1;
            }
        }

        return ((a * gb) - (b * ga)) / (gb - ga);
    }
}
