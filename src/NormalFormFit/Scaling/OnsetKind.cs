using System.Globalization;
using NormalFormFit.Onset;

namespace NormalFormFit.Scaling;

/// <summary>Stable names of the kinds of onset (part of the JSON contract).</summary>
public static class OnsetKinds
{
    /// <summary>Saddle-node on the circle: T ∝ (μ−μc)^(−½), minimum speed a → 0.</summary>
    public const string SaddleNodeOnCircle = "saddle-node-on-circle";

    /// <summary>Homoclinic: T ≈ −(1/λ)ln(μ−μc) + c.</summary>
    public const string Homoclinic = "homoclinic";

    /// <summary>Finite period at onset (Hopf): no bottleneck, the period stays finite.</summary>
    public const string FinitePeriod = "finite-period";

    /// <summary>The data cannot tell.</summary>
    public const string Undetermined = "undetermined";
}

/// <summary>Does the minimum speed a extrapolate to zero near the runs?</summary>
/// <param name="ReachesZero">True when the a-trend crosses zero with a bounded interval within one span of the runs, and most turning runs show a bottleneck.</param>
/// <param name="Onset">Where the a-trend crosses zero (NaN when it does not).</param>
/// <param name="Ci95">Its 95% interval.</param>
/// <param name="RunsWithBottleneck">Turning runs with a bottleneck fit.</param>
/// <param name="TurningRuns">Turning runs.</param>
public sealed record MinimumSpeedTrend(bool ReachesZero, double Onset, Interval Ci95, int RunsWithBottleneck, int TurningRuns)
{
    /// <summary>True when the runs carry periods only (event times): there is no phase velocity, so no minimum speed to weigh.</summary>
    public bool PeriodsOnly { get; init; }
}

/// <summary>
/// The verdict on the kind of onset from three pieces of evidence: the exponent β of T ∝ (μ−μc)^(−β), the trend of the
/// minimum speed a, and the Akaike weights of the three period laws.
/// </summary>
public static class OnsetKind
{
    /// <summary>Smallest Akaike weight of the best law for a verdict (evidence ratio 9:1 against the other two; common practice, no source).</summary>
    public const double DecisiveWeight = 0.9;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>Summarises the a-trend for the verdict.</summary>
    public static MinimumSpeedTrend MinimumSpeed(OnsetEstimate fromBottleneck, IReadOnlyList<double> turningParams, int runsWithBottleneck)
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

        return new MinimumSpeedTrend(reaches, fromBottleneck.Value, fromBottleneck.Ci95, runsWithBottleneck, turning);
    }

    /// <summary>The verdict and its evidence in plain words.</summary>
    public static (string Verdict, string Evidence) Judge(ScalingResult scaling, PeriodLawWeights? weights, MinimumSpeedTrend speed)
    {
        ArgumentNullException.ThrowIfNull(scaling);
        ArgumentNullException.ThrowIfNull(speed);
        var beta = scaling.Exponent;
        var ci = scaling.Ci95;
        var text = string.Create(Inv, $"β = {beta.Value:F3} (95% interval {ci.Low:F3} to {ci.High:F3}) from {scaling.Runs} runs; ");
        text += speed.ReachesZero
            ? string.Create(Inv, $"the minimum speed a extrapolates to zero at μ = {speed.Onset:G5}; ")
            : speed.PeriodsOnly ? string.Empty
            : speed.RunsWithBottleneck * 2 <= speed.TurningRuns
                ? $"only {speed.RunsWithBottleneck} of {speed.TurningRuns} turning runs show a bottleneck; "
                : "the minimum speed a does not extrapolate to zero near the runs; ";
        if (weights is null)
        {
            return (OnsetKinds.Undetermined, text + "too few runs to weigh the period laws");
        }

        text += string.Create(Inv, $"period-law weights: saddle-node {weights.SaddleNode:F2}, homoclinic {weights.Homoclinic:F2}, finite period {weights.FinitePeriod:F2}");
        var betaHalf = ci.Low <= 0.5 + ScalingFit.EquivalenceMargin && ci.High >= 0.5 - ScalingFit.EquivalenceMargin;
        var informative = double.IsFinite(ci.Width) && ci.Width <= ScalingFit.InformativeWidth;
        if (weights.BestWeight < DecisiveWeight)
        {
            return (OnsetKinds.Undetermined, text + "; no period law stands out: add runs closer to onset");
        }

        switch (weights.Best)
        {
            case "saddle-node" when betaHalf && informative && speed.ReachesZero:
                return (OnsetKinds.SaddleNodeOnCircle, text + "; all three point to a saddle-node on the circle");
            case "saddle-node" when betaHalf && informative && speed.PeriodsOnly:
                return (OnsetKinds.SaddleNodeOnCircle, text + "; the exponent and the period laws point to a saddle-node on the circle (event times carry no phase velocity, so the minimum speed could not be weighed)");
            case "saddle-node":
                return (OnsetKinds.Undetermined, text + (!betaHalf
                    ? "; the square-root law fits best but β excludes ½: runs may be too far from onset"
                    : !informative
                        ? string.Create(Inv, $"; the square-root law fits best but the interval of β is wider than {ScalingFit.InformativeWidth:G}, too wide to confirm ½: add runs or record longer")
                        : "; the square-root law fits best but the minimum speed does not confirm a bottleneck closing"));
            case "homoclinic" when !betaHalf:
                var h = weights.Fits.First(f => f.Law == "homoclinic");
                return (OnsetKinds.Homoclinic, text + string.Create(Inv,
                    $"; the period grows like a logarithm, as at a homoclinic onset, not like the square root of a saddle-node; the logarithmic law puts the onset at μ = {h.Onset:G6}"));
            case "homoclinic":
                return (OnsetKinds.Undetermined, text + "; the logarithmic law fits best but β is still consistent with ½");
            case "finite-period" when !speed.ReachesZero:
                return (OnsetKinds.FinitePeriod, text + "; the period stays finite and no bottleneck closes: the oscillation is born with a finite period (Hopf-like)");
            default:
                return (OnsetKinds.Undetermined, text + "; the period looks finite at onset but the minimum speed extrapolates to zero: measure closer to onset");
        }
    }
}
