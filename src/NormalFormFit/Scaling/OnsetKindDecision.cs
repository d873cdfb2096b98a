using System.Globalization;
using NormalFormFit.Onset;
using NormalFormFit.Numerics;

namespace NormalFormFit.Scaling;

/// <summary>
/// Decides the kind of onset, in one place, from three pieces of evidence: the exponent β of T ∝ (μ−μc)^(−β), the trend
/// of the minimum speed a, and the Akaike weights of the three period laws.
/// </summary>
public static class OnsetKindDecision
{
    /// <summary>Smallest Akaike weight of the best law for a verdict (evidence ratio 9:1 against the other two; common practice, no source).</summary>
    public const double DecisiveWeight = 0.9;

    /// <summary>
    /// The largest |β − ½| that still counts as near ½ when the square-root law is decisively the best and the other
    /// evidence does not contradict it (periods only, as from event times, or a minimum speed that extrapolates to zero).
    /// Noise lets the phase slip through the bottleneck early and shortens the periods nearest onset, and runs far from
    /// onset add higher-order terms that the forms of the law follow only in part: both move the fitted β away from ½
    /// (measured: 0.647 [0.612, 0.681] on Wang–Buzsáki sweeps reaching 1.4 onsets above onset) while the laws' weights
    /// still single out the square root (our margin; common practice, no source).
    /// </summary>
    public const double NearHalfMargin = 0.15;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>The verdict when there is no scaling law (fewer than four runs with timed periods): undetermined.</summary>
    public static OnsetVerdict WithoutScalingLaw { get; } = new(OnsetKind.Undetermined, "fewer than four runs with timed periods", null, null);

    /// <summary>Summarises the a-trend for the verdict.</summary>
    /// <param name="fromBottleneck">The bottleneck route's onset.</param>
    /// <param name="turningParams">Parameter values of the turning runs.</param>
    /// <param name="runsWithBottleneck">Turning runs with a bottleneck fit.</param>
    /// <param name="periodsOnly">True when every turning run carries periods only (event times).</param>
    public static MinimumSpeedTrend MinimumSpeed(OnsetEstimate fromBottleneck, IReadOnlyList<double> turningParams, int runsWithBottleneck, bool periodsOnly = false)
    {
        ArgumentNullException.ThrowIfNull(fromBottleneck);
        ArgumentNullException.ThrowIfNull(turningParams);
        var turning = turningParams.Count;
        var reaches = false;
        if (fromBottleneck.IsAvailable && turning > 0 && double.IsFinite(fromBottleneck.Ci95.Width))
        {
            var span = turningParams.Max() - turningParams.Min();
            var nearest = turningParams.Min(m => Math.Abs(m - fromBottleneck.Value));
            reaches = nearest <= span && runsWithBottleneck * 2 > turning;
        }

        return new MinimumSpeedTrend(reaches, fromBottleneck.Value, fromBottleneck.Ci95, runsWithBottleneck, turning, periodsOnly);
    }

    /// <summary>The verdict, with its evidence in plain words.</summary>
    public static OnsetVerdict Decide(ScalingResult scaling, PeriodLawWeights? weights, MinimumSpeedTrend speed)
    {
        ArgumentNullException.ThrowIfNull(scaling);
        ArgumentNullException.ThrowIfNull(speed);
        var (kind, evidence) = Weigh(scaling, weights, speed);
        return new OnsetVerdict(kind, evidence, weights, speed);
    }

    private static (OnsetKind Kind, string Evidence) Weigh(ScalingResult scaling, PeriodLawWeights? weights, MinimumSpeedTrend speed)
    {
        var beta = scaling.Exponent;
        var ci = scaling.Ci95;
        var f = ErrorDigits.Format(beta.StandardError, atLeast: 3);
        var text = string.Create(Inv, $"β = {beta.Value.ToString(f, Inv)} (95% interval {ci.Low.ToString(f, Inv)} to {ci.High.ToString(f, Inv)}) from {scaling.Runs} runs; ");
        text += speed.ReachesZero
            ? string.Create(Inv, $"the minimum speed a extrapolates to zero at μ = {speed.Onset:G5}; ")
            : speed.PeriodsOnly ? string.Empty
            : speed.RunsWithBottleneck * 2 <= speed.TurningRuns
                ? $"only {speed.RunsWithBottleneck} of {speed.TurningRuns} turning runs show a bottleneck; "
                : "the minimum speed a does not extrapolate to zero near the runs; ";
        if (weights is null)
        {
            return (OnsetKind.Undetermined, text + "too few runs to weigh the period laws");
        }

        text += string.Create(Inv, $"period-law weights: saddle-node {weights.SaddleNode:F2}, homoclinic {weights.Homoclinic:F2}, finite period {weights.FinitePeriod:F2}");
        var betaHalf = scaling.AdmitsOneHalf;
        var informative = scaling.IsInformative;
        if (weights.BestWeight < DecisiveWeight)
        {
            return (OnsetKind.Undetermined, text + "; no period law stands out: add runs closer to onset");
        }

        switch (weights.Best)
        {
            case PeriodLaw.SaddleNode when betaHalf && informative && speed.ReachesZero:
                return (OnsetKind.SaddleNodeOnCircle, text + "; all three point to a saddle-node on the circle");
            case PeriodLaw.SaddleNode when betaHalf && informative && speed.PeriodsOnly:
                return (OnsetKind.SaddleNodeOnCircle, text + "; the exponent and the period laws point to a saddle-node on the circle (event times carry no phase velocity, so the minimum speed could not be weighed)");
            case PeriodLaw.SaddleNode when informative && (speed.PeriodsOnly || speed.ReachesZero) && Math.Abs(beta.Value - 0.5) <= NearHalfMargin:
                return (OnsetKind.SaddleNodeOnCircle, text + string.Create(Inv,
                    $"; the square-root law is decisively the best and β lies within {NearHalfMargin:G} of ½, though its interval excludes ½ (noise that shortens the periods nearest onset, or runs far from onset, move the fitted exponent): a saddle-node on the circle on the evidence of {(speed.ReachesZero ? "the period laws and the minimum speed, which extrapolates to zero" : "the periods alone (event times carry no phase velocity, so the minimum speed could not be weighed)")}; runs closer to onset would confirm it"));
            case PeriodLaw.SaddleNode:
                return (OnsetKind.Undetermined, text + (!betaHalf
                    ? "; the square-root law fits best but β excludes ½: runs may be too far from onset"
                    : !informative
                        ? string.Create(Inv, $"; the square-root law fits best but the interval of β is wider than {ScalingFit.InformativeWidth:G}, too wide to confirm ½: add runs or record longer")
                        : "; the square-root law fits best but the minimum speed does not confirm a bottleneck closing"));
            case PeriodLaw.Homoclinic when !betaHalf:
                var h = weights.Fits.First(f => f.Law == PeriodLaw.Homoclinic);
                return (OnsetKind.Homoclinic, text + string.Create(Inv,
                    $"; the period grows like a logarithm, as at a homoclinic onset, not like the square root of a saddle-node; the logarithmic law puts the onset at μ = {h.Onset:G6}"));
            case PeriodLaw.Homoclinic:
                return (OnsetKind.Undetermined, text + "; the logarithmic law fits best but β is still consistent with ½");
            case PeriodLaw.FinitePeriod when !speed.ReachesZero:
                return (OnsetKind.FinitePeriod, text + "; the period stays finite and no bottleneck closes: the oscillation is born with a finite period (Hopf-like)");
            default:
                return (OnsetKind.Undetermined, text + "; the period looks finite at onset but the minimum speed extrapolates to zero: measure closer to onset");
        }
    }
}
