using System.Globalization;

namespace NormalFormFit.Analysis;

/// <summary>
/// Evidence, from the periods alone, that the rate does not start from zero at onset: the run nearest the silent runs
/// already fires at a rate that no square-root onset between them allows. Words for the verdict, not a verdict.
/// </summary>
/// <remarks>
/// At a saddle-node on the circle the rate grows like √(μ − μc) near onset (the period law T ≈ π/√(ab) with a ∝ μ − μc).
/// With a silent run at μs and the onset somewhere between μs and the nearest steadily firing run μl, the rate at μl over
/// the rate at the farthest firing run μh is then at most √((μl − μs)/(μh − μs)) (the bound is reached for μc = μs; a
/// later onset makes the ratio smaller). A ratio above <see cref="Margin"/> × that bound, by two standard errors (from
/// the runs' period errors), means the rate jumps from zero to a finite value between μs and μl: an onset of class II
/// (Hodgkin 1948, J. Physiol. 107:165), not a saddle-node on the circle. The margin allows for the higher-order terms that
/// make the rate of a square-root onset grow more slowly than √ far from onset (measured, class-I sweeps of
/// <c>SignalSweepAcceptanceTests</c> and <c>WangBuzsakiSweepTests</c>: ratios 0.23 and 0.16 against bounds 0.30 and
/// 0.30; our margin, no source). Steady: at least <see cref="SteadyIntervals"/> intervals (a run that fires a few spikes
/// and stops, as near a class-II onset with noise, is not used).
/// </remarks>
public static class FiniteRateAtOnset
{
    /// <summary>How far above the square-root bound the rate ratio must lie (our margin, no source).</summary>
    public const double Margin = 1.25;

    /// <summary>Fewest timed intervals of a steadily firing run.</summary>
    public const int SteadyIntervals = 10;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>The sentence that says so (starting "; "), or null when the periods do not show a finite rate at onset.</summary>
    public static string? Evidence(IReadOnlyList<RunResult> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var silent = runs.Where(r => !r.IsTurning).Select(r => r.Param).ToList();
        var steady = runs.Where(r => r.IsTurning && r.Period is { } p && p.Revolutions >= SteadyIntervals
                && double.IsFinite(p.Measured.Value) && p.Measured.Value > 0 && double.IsFinite(p.Measured.StandardError))
            .ToList();
        if (silent.Count == 0 || steady.Count < 2)
        {
            return null;
        }

        // The silent runs must lie on one side of the steady ones; μs is the silent run nearest them.
        double mus;
        if (silent.Max() < steady.Min(r => r.Param))
        {
            mus = silent.Max();
        }
        else if (silent.Min() > steady.Max(r => r.Param))
        {
            mus = silent.Min();
        }
        else
        {
            return null;
        }

        var low = steady.MinBy(r => Math.Abs(r.Param - mus))!;
        var high = steady.MaxBy(r => Math.Abs(r.Param - mus))!;
        var bound = Math.Sqrt(Math.Abs(low.Param - mus) / Math.Abs(high.Param - mus));
        var tl = low.Period!.Measured;
        var th = high.Period!.Measured;
        var ratio = th.Value / tl.Value;
        var se = ratio * Math.Sqrt(Math.Pow(th.StandardError / th.Value, 2) + Math.Pow(tl.StandardError / tl.Value, 2));
        if (!(ratio - (2 * se) > Margin * bound))
        {
            return null;
        }

        return string.Create(Inv,
            $"; not a saddle-node on the circle: the run at μ = {low.Param:G5}, the nearest to the silent run at μ = {mus:G5}, already fires steadily (period {tl.Value:G4}, {low.Period.Revolutions} intervals) at {ratio:F2} ± {se:F2} of the rate at μ = {high.Param:G5}, where a rate growing from zero like √(μ − μc) above μ = {mus:G5} allows at most {bound:F2}: the rate jumps from zero to a finite value at onset (class II, as at a subcritical Hopf or a saddle-node off the circle)");
    }
}
