namespace NormalFormFit.Numerics;

/// <summary>One smoother's answer at a trial λ.</summary>
/// <param name="Usable">False when the solve at this λ cannot be trusted (not positive definite, trace identity
/// broken): the scan stops there and the refinement treats the point as the worst possible.</param>
/// <param name="Score">GCV score V(λ) = n·RSS/(n − tr A)² (or the weighted analogue).</param>
/// <param name="Trace">tr A, the effective degrees of freedom.</param>
internal readonly record struct GcvTrial(bool Usable, double Score, double Trace);

/// <summary>Where one smoother's scan over log₁₀ λ starts, steps and ends.</summary>
/// <param name="Start">First log₁₀ λ of the scan.</param>
/// <param name="Step">Spacing of the scan in decades.</param>
/// <param name="End">Last log₁₀ λ the scan may reach.</param>
/// <param name="RefineFloor">Lowest log₁₀ λ the refinement may probe (−∞ lets it go one step below
/// <paramref name="Start"/>).</param>
internal readonly record struct GcvScan(double Start, double Step, double End, double RefineFloor);

/// <summary>
/// Generalised cross-validation (Craven &amp; Wahba 1979) for a smoother's λ: a coarse scan over log₁₀ λ that stops
/// early once the score has clearly climbed or the fit has become a straight line, then Brent's method (Brent 1973,
/// ch. 5) between the best scan point's neighbours. Cost: the scan's points plus about a dozen evaluations.
/// </summary>
/// <remarks>Serves the exact spline and the penalised spline; each chooses its own <see cref="GcvScan"/>.</remarks>
internal static class GcvSearch
{
    // λ is found to 0.23 %: far below the sampling variability of the GCV choice itself, and the fit changes by
    // less than 1e-3 of the residual scale (GCV is flat at its minimum).
    private const double Log10Tolerance = 1e-3;

    // Once two scan points in a row score above this multiple of the best, the signal has been smoothed away and
    // the score only climbs towards the straight-line residual variance (common practice, no source): the scan stops
    // there instead of running to the largest λ.
    private const double ClimbFactor = 2.0;

    // A fit within 1e-3 of a straight line (tr A < 2.001) cannot change the score noticeably at larger λ.
    private const double StraightLineTrace = 2.001;

    /// <summary>
    /// The log₁₀ λ minimising the GCV score of <paramref name="trial"/> (called with log₁₀ λ); NaN when no scan
    /// point is usable.
    /// </summary>
    public static double MinimizeLog10Lambda(Func<double, GcvTrial> trial, GcvScan scan)
    {
        double bestX = double.NaN, bestScore = double.PositiveInfinity, lastValid = double.NaN;
        var climbing = 0;
        for (var x = scan.Start; x <= scan.End; x += scan.Step)
        {
            var p = trial(x);
            if (!p.Usable)
            {
                break;
            }

            lastValid = x;
            if (p.Score < bestScore)
            {
                bestScore = p.Score;
                bestX = x;
            }

            climbing = p.Score > ClimbFactor * bestScore ? climbing + 1 : 0;
            if (climbing == 2 || p.Trace < StraightLineTrace)
            {
                break;
            }
        }

        if (double.IsNaN(bestX))
        {
            return double.NaN;
        }

        double Score(double x)
        {
            var p = trial(x);
            return p.Usable ? p.Score : double.MaxValue;
        }

        var upper = Math.Min(bestX + scan.Step, lastValid);
        var lower = Math.Max(bestX - scan.Step, scan.RefineFloor);
        return upper <= bestX ? bestX : Brent.Minimize(Score, lower, upper, bestX, bestScore, Log10Tolerance);
    }
}
