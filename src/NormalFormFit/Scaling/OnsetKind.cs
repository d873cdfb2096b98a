using NormalFormFit.Onset;

namespace NormalFormFit.Scaling;

/// <summary>The kinds of onset the analysis tells apart.</summary>
public enum OnsetKind
{
    /// <summary>Saddle-node on the circle: T ∝ (μ−μc)^(−½), minimum speed a → 0.</summary>
    SaddleNodeOnCircle,

    /// <summary>Homoclinic: T ≈ −(1/λ)ln(μ−μc) + c.</summary>
    Homoclinic,

    /// <summary>Finite period at onset (Hopf): no bottleneck, the period stays finite.</summary>
    FinitePeriod,

    /// <summary>The data cannot tell.</summary>
    Undetermined,
}

/// <summary>Does the minimum speed a extrapolate to zero near the runs?</summary>
/// <param name="ReachesZero">True when the a-trend crosses zero with a bounded interval within one span of the runs, and most turning runs show a bottleneck.</param>
/// <param name="Onset">Where the a-trend crosses zero (NaN when it does not).</param>
/// <param name="Ci95">Its 95% interval.</param>
/// <param name="RunsWithBottleneck">Turning runs with a bottleneck fit.</param>
/// <param name="TurningRuns">Turning runs.</param>
/// <param name="PeriodsOnly">True when the runs carry periods only (event times): there is no phase velocity, so no minimum speed to weigh.</param>
public sealed record MinimumSpeedTrend(bool ReachesZero, double Onset, Interval Ci95, int RunsWithBottleneck, int TurningRuns, bool PeriodsOnly = false);

/// <summary>The kind of onset, decided once by <see cref="OnsetKindDecision"/>, with the evidence it rests on.</summary>
/// <param name="Kind">The kind of onset.</param>
/// <param name="Evidence">The evidence in plain words.</param>
/// <param name="Weights">Akaike weights of the three period laws (null when they could not be fitted or there was no scaling law).</param>
/// <param name="MinimumSpeed">Whether the minimum speed a extrapolates to zero (null when there was no scaling law).</param>
public sealed record OnsetVerdict(OnsetKind Kind, string Evidence, PeriodLawWeights? Weights, MinimumSpeedTrend? MinimumSpeed)
{
    /// <summary>Whether the onset routes' model (a saddle-node on the circle) applies to this kind of onset; the same for both routes.</summary>
    public RouteStatus RouteStatus => Kind switch
    {
        OnsetKind.SaddleNodeOnCircle => RouteStatus.Applicable,
        OnsetKind.Homoclinic => RouteStatus.Unreliable,
        OnsetKind.FinitePeriod => RouteStatus.NotApplicable,
        _ => RouteStatus.Unconfirmed,
    };

    /// <summary>Why the routes are not plainly applicable, in plain words (null when they are).</summary>
    public string? RouteStatusReason => Kind switch
    {
        OnsetKind.SaddleNodeOnCircle => null,
        OnsetKind.Homoclinic => "the onset looks homoclinic: the minimum speed and T⁻² do not vanish linearly there (T grows like a logarithm), so the extrapolation is biased; use the homoclinic law's onset",
        OnsetKind.FinitePeriod => "the oscillation is born with a finite period (Hopf-like): there is no bottleneck closing and the period does not diverge, so neither a nor T⁻² goes to zero at onset",
        _ => "the kind of onset could not be confirmed as a saddle-node on the circle; the route assumes it",
    };
}
