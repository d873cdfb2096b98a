using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Ingest;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;

namespace NormalFormFit.Reporting;

/// <summary>
/// The one map between the analysis' enums and the names the JSON report, the run lines and the text summary use for
/// them. The names are part of the output contract (README, docs/diagnostics.md): new ones may be added, none renamed.
/// Every enum value has exactly one name; a value without one fails when this class is first used.
/// </summary>
public static class WireNames
{
    private static readonly Names<RunFlag> Flags = new(
        (RunFlag.FewRevolutions, "few-revolutions"),
        (RunFlag.NotTurning, "not-turning"),
        (RunFlag.FarFromOnset, "far-from-onset"),
        (RunFlag.FieldPeriodMismatch, "field-period-mismatch"),
        (RunFlag.NoBottleneck, "no-bottleneck"),
        (RunFlag.UnsafeUnwrap, "unsafe-unwrap"),
        (RunFlag.CoarseSampling, "coarse-sampling"),
        (RunFlag.WindowBias, "window-bias"),
        (RunFlag.NoiseDominated, "noise-dominated"),
        (RunFlag.MixedBehaviour, "mixed-behaviour"),
        (RunFlag.Bistable, "bistable"),
        (RunFlag.LargeGaps, "large-gaps"),
        (RunFlag.NotAnEllipse, "not-an-ellipse"),
        (RunFlag.PeriodsOnly, "periods-only"));

    private static readonly Names<TurningSense> Senses = new(
        (TurningSense.Forward, "forward"),
        (TurningSense.Backward, "backward"),
        (TurningSense.Mixed, "mixed"));

    private static readonly Names<RecordingKind> Recordings = new(
        (RecordingKind.Phase, "phase"),
        (RecordingKind.Positions, "positions"),
        (RecordingKind.Events, "events"),
        (RecordingKind.Signal, "signal"));

    private static readonly Names<OnsetKind> Kinds = new(
        (OnsetKind.SaddleNodeOnCircle, "saddle-node-on-circle"),
        (OnsetKind.Homoclinic, "homoclinic"),
        (OnsetKind.FinitePeriod, "finite-period"),
        (OnsetKind.Undetermined, "undetermined"));

    private static readonly Names<OnsetRoute> Routes = new(
        (OnsetRoute.Bottleneck, "bottleneck"),
        (OnsetRoute.Period, "period"));

    private static readonly Names<RecommendationBasis> Bases = new(
        (RecommendationBasis.Combined, "combined"),
        (RecommendationBasis.Bottleneck, "bottleneck"),
        (RecommendationBasis.Period, "period"),
        (RecommendationBasis.None, "none"));

    private static readonly Names<RouteStatus> Statuses = new(
        (RouteStatus.Applicable, "applicable"),
        (RouteStatus.Unconfirmed, "unconfirmed"),
        (RouteStatus.Unreliable, "unreliable"),
        (RouteStatus.NotApplicable, "not-applicable"));

    private static readonly Names<OnsetLaw> OnsetLaws = new(
        (OnsetLaw.Polynomial, "polynomial"),
        (OnsetLaw.SquareRootWithOffset, "square-root-with-offset"));

    private static readonly Names<PeriodLaw> PeriodLaws = new(
        (PeriodLaw.SaddleNode, "saddle-node"),
        (PeriodLaw.Homoclinic, "homoclinic"),
        (PeriodLaw.FinitePeriod, "finite-period"));

    private static readonly Names<ScalingForm> Forms = new(
        (ScalingForm.PowerLaw, "power-law"),
        (ScalingForm.PowerLawWithOffset, "power-law-with-offset"),
        (ScalingForm.PowerLawOfQuadraticRate, "power-law-of-quadratic-rate"));

    /// <summary>The flag's name (<c>runs[].flags</c>; also the code of the diagnostic that explains it).</summary>
    public static string Of(RunFlag flag) => Flags.Name(flag);

    /// <summary>What a run file recorded (<c>runs[].input_kind</c>).</summary>
    public static string Of(RecordingKind kind) => Recordings.Name(kind);

    /// <summary>The name of a turning sense (compare's <c>turning_sense</c>).</summary>
    public static string Of(TurningSense sense) => Senses.Name(sense);

    /// <summary>The kind of onset (<c>scaling.verdict</c>).</summary>
    public static string Of(OnsetKind kind) => Kinds.Name(kind);

    /// <summary>The onset route (<c>next_measurements[].route</c>).</summary>
    public static string Of(OnsetRoute route) => Routes.Name(route);

    /// <summary>Where the recommended onset comes from (<c>onset.recommended.basis</c>).</summary>
    public static string Of(RecommendationBasis basis) => Bases.Name(basis);

    /// <summary>Whether a route applies (<c>onset.from_*.status</c>).</summary>
    public static string Of(RouteStatus status) => Statuses.Name(status);

    /// <summary>The law a route fitted (<c>onset.from_*.law</c>).</summary>
    public static string Of(OnsetLaw law) => OnsetLaws.Name(law);

    /// <summary>One of the three period laws (<c>scaling.laws[].law</c>).</summary>
    public static string Of(PeriodLaw law) => PeriodLaws.Name(law);

    /// <summary>The form of the scaling law (<c>scaling.form</c>).</summary>
    public static string Of(ScalingForm form) => Forms.Name(form);

    /// <summary>The flag named <paramref name="name"/>; a <see cref="FormatException"/> naming it when there is none.</summary>
    public static RunFlag ParseFlag(string? name) =>
        TryParse(name, out RunFlag flag) ? flag : throw new FormatException($"unknown flag '{name}'");

    /// <summary>The recording kind named <paramref name="name"/> (phase when absent); a <see cref="FormatException"/> naming it when there is none.</summary>
    public static RecordingKind ParseRecordingKind(string? name) =>
        name is null ? RecordingKind.Phase
        : TryParse(name, out RecordingKind kind) ? kind : throw new FormatException($"unknown input kind '{name}'");

    /// <summary>The flag named <paramref name="name"/>; false when the name is none of <see cref="Of(RunFlag)"/>'s.</summary>
    public static bool TryParse(string? name, out RunFlag flag) => Flags.TryParse(name, out flag);

    /// <summary>The kind of recording named <paramref name="name"/>; false when the name is none of <see cref="Of(RecordingKind)"/>'s.</summary>
    public static bool TryParse(string? name, out RecordingKind kind) => Recordings.TryParse(name, out kind);

    /// <summary>A two-way table for one enum, complete: every value has one name, and no two share one.</summary>
    private sealed class Names<T>
        where T : struct, Enum
    {
        private readonly Dictionary<T, string> byValue;
        private readonly Dictionary<string, T> byName;

        public Names(params (T Value, string Name)[] pairs)
        {
            byValue = pairs.ToDictionary(p => p.Value, p => p.Name);
            byName = pairs.DistinctBy(p => p.Name, StringComparer.Ordinal).ToDictionary(p => p.Name, p => p.Value, StringComparer.Ordinal);
            var missing = Enum.GetValues<T>().Where(v => !byValue.ContainsKey(v)).ToList();
            if (missing.Count > 0 || byName.Count != pairs.Length)
            {
                throw new InvalidOperationException($"the names of {typeof(T).Name} are incomplete or repeated (missing: {string.Join(", ", missing)})");
            }
        }

        public string Name(T value) =>
            byValue.TryGetValue(value, out var name) ? name : throw new ArgumentOutOfRangeException(nameof(value), value, $"no name for this {typeof(T).Name}");

        public bool TryParse(string? name, out T value)
        {
            value = default;
            return name is not null && byName.TryGetValue(name, out value);
        }
    }
}
