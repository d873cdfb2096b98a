using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>What a noise-free planar system does from a start: settles on a limit cycle (with its period) or does not within the time allowed.</summary>
/// <param name="Fires">True when a limit cycle was reached: the recorded variable repeats with a converged period and amplitude.</param>
/// <param name="Period">Period of the cycle (NaN when not firing).</param>
/// <param name="Low">Lowest value of the recorded variable over the last cycle (or at the end).</param>
/// <param name="High">Highest value over the last cycle (or at the end).</param>
/// <param name="X0">State at the end.</param>
/// <param name="X1">State at the end.</param>
/// <param name="SmallestStep">Smallest accepted step over the last cycle (or the whole run when silent).</param>
/// <param name="Failed">True when the integration broke down (non-finite state, step underflow, too many steps).</param>
internal readonly record struct CycleOutcome(bool Fires, double Period, double Low, double High, double X0, double X1, double SmallestStep, bool Failed)
{
    /// <summary>Frequency 1/T, 0 when not firing.</summary>
    public double Frequency => Fires ? 1.0 / Period : 0.0;
}

/// <summary>
/// The long-run behaviour of a noise-free planar system at fixed μ, by adaptive Dormand–Prince 5(4) integration
/// (<see cref="DormandPrince{TField}"/>, rtol 10⁻⁸). Local maxima and minima of the recorded variable are located
/// inside steps on the cubic Hermite interpolant of the step's end values and slopes (Hairer, Nørsett &amp; Wanner
/// 1993, §II.6); the period is the interval between upward crossings of the level halfway between the last cycle's
/// maximum and minimum (root of the same interpolant by bisection). The system fires when three successive intervals
/// agree to 10⁻⁶ and the last two maxima to 10⁻⁶ of the amplitude; the transient before that is discarded. A system
/// that has not settled on a cycle by <c>timeCap</c> is silent: a cycle slower than about a quarter of the cap
/// counts as silent too, which sets the resolution of an onset found by simulation.
/// </summary>
internal static class PlanarCycle
{
    private const int MaxSteps = 3_000_000;

    public static CycleOutcome Solve(PlanarModel.Field field, int observed, double x0, double x1, double timeCap)
    {
        var dp = new DormandPrince<PlanarModel.Field>(field, 1e-8, 1e-11, timeCap / 200);
        dp.Reset(x0, x1, 0.0, timeCap * 1e-8);
        double Obs() => observed == 0 ? dp.X0 : dp.X1;
        double Slope() => observed == 0 ? dp.Rate.D0 : dp.Rate.D1;

        var maxima = new List<double>();
        var crossings = new List<double>();
        var level = double.NaN;
        var lastMin = double.NaN;
        var low = Obs();
        var high = Obs();
        var smallest = double.PositiveInfinity;
        for (var step = 0; step < MaxSteps && dp.Time < timeCap; step++)
        {
            var t0 = dp.Time;
            var y0 = Obs();
            var d0 = Slope();
            if (!dp.Advance())
            {
                return new CycleOutcome(false, double.NaN, low, high, dp.X0, dp.X1, smallest, true);
            }

            var h = dp.Time - t0;
            var y1 = Obs();
            var d1 = Slope();
            smallest = Math.Min(smallest, h);
            low = Math.Min(low, y1);
            high = Math.Max(high, y1);
            if (d0 < 0 && d1 >= 0)
            {
                var s = Bisect(u => HermiteSlope(u, y0, y1, h * d0, h * d1), 0.0, 1.0);
                lastMin = Hermite(s, y0, y1, h * d0, h * d1);
            }

            if (double.IsFinite(level) && y0 < level && y1 >= level)
            {
                var s = Bisect(u => Hermite(u, y0, y1, h * d0, h * d1) - level, 0.0, 1.0);
                crossings.Add(t0 + (s * h));
                if (crossings.Count >= 4 && maxima.Count >= 2)
                {
                    var p1 = crossings[^1] - crossings[^2];
                    var p2 = crossings[^2] - crossings[^3];
                    var p3 = crossings[^3] - crossings[^4];
                    var amplitude = maxima[^1] - lastMin;
                    if (Math.Abs(p1 - p2) <= 1e-6 * p1 && Math.Abs(p2 - p3) <= 1e-6 * p1
                        && Math.Abs(maxima[^1] - maxima[^2]) <= 1e-6 * amplitude && amplitude > 1e-9 * (1.0 + Math.Abs(maxima[^1])))
                    {
                        return new CycleOutcome(true, p1, lastMin, maxima[^1], dp.X0, dp.X1, smallest, false);
                    }
                }
            }

            if (d0 > 0 && d1 <= 0)
            {
                var s = Bisect(u => -HermiteSlope(u, y0, y1, h * d0, h * d1), 0.0, 1.0);
                maxima.Add(Hermite(s, y0, y1, h * d0, h * d1));
                if (double.IsFinite(lastMin))
                {
                    // The level halfway up the latest cycle; moved (and the crossings restarted) when the cycle no longer straddles it well.
                    var a = maxima[^1] - lastMin;
                    if (!double.IsFinite(level) || level < lastMin + (0.1 * a) || level > maxima[^1] - (0.1 * a))
                    {
                        level = lastMin + (0.5 * a);
                        crossings.Clear();
                        smallest = double.PositiveInfinity;
                    }
                }
            }
        }

        return new CycleOutcome(false, double.NaN, low, high, dp.X0, dp.X1, smallest, dp.Time < timeCap);
    }

    /// <summary>Cubic Hermite interpolant on [0, 1] from end values and end slopes times the step.</summary>
    private static double Hermite(double s, double y0, double y1, double m0, double m1)
    {
        var s2 = s * s;
        var s3 = s2 * s;
        return (((2 * s3) - (3 * s2) + 1) * y0) + ((s3 - (2 * s2) + s) * m0) + (((-2 * s3) + (3 * s2)) * y1) + ((s3 - s2) * m1);
    }

    private static double HermiteSlope(double s, double y0, double y1, double m0, double m1)
    {
        var s2 = s * s;
        return (((6 * s2) - (6 * s)) * y0) + (((3 * s2) - (4 * s) + 1) * m0) + (((-6 * s2) + (6 * s)) * y1) + (((3 * s2) - (2 * s)) * m1);
    }

    /// <summary>Root of g on [a, b] with g(a) &lt; 0 ≤ g(b) (or the reverse) by bisection, 60 halvings.</summary>
    private static double Bisect(Func<double, double> g, double a, double b)
    {
        var ga = g(a);
        for (var i = 0; i < 60; i++)
        {
            var m = 0.5 * (a + b);
            var gm = g(m);
            if (Math.Sign(gm) == Math.Sign(ga) && gm != 0)
            {
                a = m;
                ga = gm;
            }
            else
            {
                b = m;
            }
        }

        return 0.5 * (a + b);
    }
}
