using NormalFormFit.Bottleneck;
using NormalFormFit.Field;
using NormalFormFit.Ingest;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Analysis;

/// <summary>
/// What marks a run: raised by the run checks (<see cref="RunChecks"/>), by the input (positions off an ellipse, gaps,
/// event times), or by the set of runs (<see cref="RunFlag.Bistable"/>, see <see cref="AnalysisReport.FlagsOf"/>).
/// </summary>
[System.Diagnostics.CodeAnalysis.SuppressMessage("Naming", "CA1711:Identifiers should not have incorrect suffix", Justification = "A flag is the word for a mark on a run (runs[].flags); one value per run check, not a bit field.")]
public enum RunFlag
{
    /// <summary>Fewer than three whole revolutions were timed.</summary>
    FewRevolutions,

    /// <summary>The run does not turn (less than one revolution).</summary>
    NotTurning,

    /// <summary>The measured period differs from π/√(ab) by more than 25%: the run is far from onset.</summary>
    FarFromOnset,

    /// <summary>The period from ∮dθ/θ̇ disagrees with the measured period beyond their errors.</summary>
    FieldPeriodMismatch,

    /// <summary>No parabola opening upward fits the slowest part of the field.</summary>
    NoBottleneck,

    /// <summary>The phase jumps by nearly π or more between samples: unwrapping is unsafe.</summary>
    UnsafeUnwrap,

    /// <summary>Too few samples during a passage through the bottleneck.</summary>
    CoarseSampling,

    /// <summary>The window-halving check shows a quartic bias of a comparable to its error.</summary>
    WindowBias,

    /// <summary>Phase noise shortens the bottleneck passage by more than 10%: the run is left out of the onset fits.</summary>
    NoiseDominated,

    /// <summary>The run turns, then comes to rest (or the reverse): both behaviours at one parameter value.</summary>
    MixedBehaviour,

    /// <summary>The run rests at a parameter value where other runs turn (or the reverse): hysteresis or bistability.</summary>
    Bistable,

    /// <summary>Gaps too long to follow the phase across (over half the local revolution time) split the run into segments.</summary>
    LargeGaps,

    /// <summary>The orbit of the positions is far from an ellipse: the phase is a protophase (a, b in its units).</summary>
    NotAnEllipse,

    /// <summary>Event times: periods only, no bottleneck.</summary>
    PeriodsOnly,
}

/// <summary>Smoothing summary of a run.</summary>
/// <param name="Lambda">Smoothing parameter of the longest segment, in the run's time units.</param>
/// <param name="NoiseSd">Residual standard deviation of the phase about the spline (rad): the measurement noise.</param>
/// <param name="EffectiveDegreesOfFreedom">Total trace of the influence matrices.</param>
/// <param name="Smoother">
/// The smoother of the longest segment, the one <paramref name="Lambda"/> belongs to (shorter segments of the same run
/// may have used the exact spline); null when not known (run lines written before it was recorded).
/// </param>
public sealed record SmoothingSummary(double Lambda, double NoiseSd, double EffectiveDegreesOfFreedom, SmoothingMethod? Smoother);

/// <summary>Periods of a run: measured, and predicted from the bottleneck and from the field.</summary>
/// <param name="Measured">Mean measured period with standard error.</param>
/// <param name="FromBottleneck">π/√(ab).</param>
/// <param name="FromField">∮dθ/θ̇.</param>
/// <param name="Revolutions">Whole revolutions timed.</param>
public sealed record PeriodSummary(Estimate Measured, Estimate FromBottleneck, Estimate FromField, int Revolutions);

/// <summary>Everything learned from one run.</summary>
/// <param name="File">Run file as named in the manifest.</param>
/// <param name="Param">Control parameter μ.</param>
/// <param name="Label">Optional label.</param>
/// <param name="Samples">Samples read.</param>
/// <param name="Duration">Time covered.</param>
/// <param name="Turns">Phase advance in turns.</param>
/// <param name="Direction">+1 or −1: the sense in which the phase advanced in the file.</param>
/// <param name="Smoothing">Smoothing summary (null if the run could not be smoothed).</param>
/// <param name="Field">Reconstructed θ̇(θ) (null for a run that does not turn).</param>
/// <param name="Bottleneck">Normal-form fit at the bottleneck (null when none).</param>
/// <param name="Period">Periods (null for a run that does not turn).</param>
/// <param name="Flags">What the run's own evidence marks it with, in the order raised (the set of runs may add
/// <see cref="RunFlag.Bistable"/>: <see cref="AnalysisReport.FlagsOf"/>).</param>
/// <param name="Diagnostics">Messages about this run.</param>
public sealed record RunResult(
    string File,
    double Param,
    string? Label,
    int Samples,
    double Duration,
    double Turns,
    int Direction,
    SmoothingSummary? Smoothing,
    PhaseField? Field,
    BottleneckFit? Bottleneck,
    PeriodSummary? Period,
    IReadOnlyList<RunFlag> Flags,
    IReadOnlyList<Diagnostic> Diagnostics)
{
    /// <summary>True when the run turned at least once.</summary>
    public bool IsTurning => !Flags.Contains(RunFlag.NotTurning);

    /// <summary>Exponential settling at the stable point, for a run that does not turn (null otherwise or when not resolved).</summary>
    public RelaxationFit? Relaxation { get; init; }

    /// <summary>Phase-diffusion estimate and its effect on the bottleneck passage (null when the run is too short).</summary>
    public NoiseEstimate? Noise { get; init; }

    /// <summary>What the run file recorded.</summary>
    public RecordingKind InputKind { get; init; } = RecordingKind.Phase;

    /// <summary>The ellipse fitted to the orbit when the run was recorded as positions; null otherwise.</summary>
    public OrbitSummary? Orbit { get; init; }

    /// <summary>The samples, fitted orbit, dropped positions and bottleneck for the orbit figure (positions only; not kept in run lines).</summary>
    public OrbitView? OrbitView { get; init; }

    /// <summary>For a single-signal recording: the event detector's levels and counts; null otherwise.</summary>
    public SignalEventSummary? Events { get; init; }

    /// <summary>For a single-signal recording with a protophase: the delay-embedded orbit and its centre; null otherwise.</summary>
    public SignalOrbit? SignalOrbit { get; init; }

    /// <summary>The embedded samples, mean orbit, centre and bottleneck for the orbit figure (single signals with a protophase only; not kept in run lines).</summary>
    public SignalOrbitView? SignalOrbitView { get; init; }

    /// <summary>Rows of the run file not used as samples, by reason (none when not known, e.g. run lines of an earlier version).</summary>
    public DroppedRows Dropped { get; init; } = DroppedRows.None;

    /// <summary>
    /// Times of the samples the phase was analysed at (after dropped frames and rows), so that a simulation of the run can be
    /// sampled as the run was (compare's replicates); null when not known (run lines, which do not carry them).
    /// </summary>
    public double[]? SampleTimes { get; init; }
}
