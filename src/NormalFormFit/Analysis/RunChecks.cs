using System.Globalization;
using NormalFormFit.Bottleneck;

namespace NormalFormFit.Analysis;

/// <summary>A run check that fired: the flag it puts on the run and the diagnostic that says why.</summary>
/// <param name="Flag">The flag.</param>
/// <param name="Diagnostic">The message, with the same code as the flag's name (docs/diagnostics.md).</param>
public sealed record RunFinding(RunFlag Flag, Diagnostic Diagnostic);

/// <summary>A run's flags and diagnostics in the order they are raised, after the diagnostics of its source.</summary>
internal sealed class RunFindings(IEnumerable<Diagnostic> sourceDiagnostics)
{
    /// <summary>Flags raised so far.</summary>
    public List<RunFlag> Flags { get; } = [];

    /// <summary>The source's diagnostics, then those added so far.</summary>
    public List<Diagnostic> Diagnostics { get; } = [.. sourceDiagnostics];

    /// <summary>Adds the finding's flag and diagnostic (nothing when the check passed).</summary>
    public void Raise(RunFinding? finding)
    {
        if (finding is not null)
        {
            Flags.Add(finding.Flag);
            Diagnostics.Add(finding.Diagnostic);
        }
    }
}

/// <summary>
/// The checks on one run, each a named rule with its thresholds as named constants: a rule returns its
/// <see cref="RunFinding"/> when the run fails it, null when the run passes. The thresholds are listed with their
/// meaning in docs/diagnostics.md.
/// </summary>
public static class RunChecks
{
    /// <summary>Fewest consecutive samples a run needs to be smoothed and analysed.</summary>
    public const int MinimumSamples = 8;

    /// <summary>Fewest turns for a run that turns (one revolution).</summary>
    public const double MinimumTurns = 1;

    /// <summary>Fewest whole revolutions (or intervals between events) for a period with an error.</summary>
    public const int MinimumRevolutions = 3;

    /// <summary>Largest relative difference of the measured period from π/√(ab) for a run near onset (25%).</summary>
    public const double FarFromOnsetTolerance = 0.25;

    /// <summary>Standard errors by which ∮dθ/θ̇ must differ from the measured period to count as a mismatch.</summary>
    public const double FieldPeriodStandardErrors = 3;

    /// <summary>Relative difference (2%) ∮dθ/θ̇ must also exceed, so that tiny errors on long records do not flag a run.</summary>
    public const double FieldPeriodTolerance = 0.02;

    /// <summary>Fewest samples per bottleneck passage (half of π/√(ab)) to see its shape.</summary>
    public const double MinimumSamplesPerPassage = 10;

    /// <summary>Standard errors of a by which the change of a on halving the fit window must exceed to flag a bias.</summary>
    public const double WindowBiasStandardErrors = 3;

    /// <summary>Relative change of a (5%) the window-halving change must also exceed.</summary>
    public const double WindowBiasTolerance = 0.05;

    /// <summary>
    /// The part of the record at either end examined for a rest (a quarter). It must last more than
    /// <see cref="RestMinimumPeriods"/> periods and advance less than <see cref="RestMaximumTurns"/> turns to be a rest,
    /// not a slow bottleneck passage (common practice, no source).
    /// </summary>
    public const double RestFraction = 0.25;

    /// <summary>Periods the examined end of the record must last (two).</summary>
    public const double RestMinimumPeriods = 2;

    /// <summary>Most turns within a rest (a tenth of a turn).</summary>
    public const double RestMaximumTurns = 0.1;

    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>Steps near π between samples: the phase cannot be unwrapped safely there.</summary>
    public static RunFinding? UnsafeUnwrap(string file, int largeSteps) => largeSteps > 0
        ? new(RunFlag.UnsafeUnwrap, Warn(file, "unsafe-unwrap",
            $"{largeSteps} step(s) between samples are near π: the phase cannot be unwrapped safely there; sample faster"))
        : null;

    /// <summary>Fewer than <see cref="MinimumSamples"/> usable samples: the run is taken as not turning.</summary>
    public static RunFinding? TooShort(string file, int usableSamples) => usableSamples < MinimumSamples
        ? new(RunFlag.NotTurning, Warn(file, "too-short",
            $"only {usableSamples} usable samples; a run needs at least {MinimumSamples} consecutive samples"))
        : null;

    /// <summary>Less than <see cref="MinimumTurns"/> turn: a resting run (below onset?), no period.</summary>
    public static RunFinding? NotTurning(string file, double turns) => turns < MinimumTurns
        ? new(RunFlag.NotTurning, Info(file, "not-turning", string.Create(Inv,
            $"the phase advances only {turns:F2} revolutions: the run does not turn (below onset?); no period is measured")))
        : null;

    /// <summary>No parabola opening upward fits the slowest part of the field.</summary>
    public static RunFinding? NoBottleneck(string file, BottleneckFit? bottleneck) => bottleneck is null
        ? new(RunFlag.NoBottleneck, Warn(file, "no-bottleneck",
            "no parabola opening upward fits the slowest part of θ̇(θ): the run shows no bottleneck"))
        : null;

    /// <summary>Fewer than <see cref="MinimumRevolutions"/> whole revolutions timed.</summary>
    public static RunFinding? FewRevolutions(string file, int revolutions) => revolutions < MinimumRevolutions
        ? new(RunFlag.FewRevolutions, Warn(file, "few-revolutions",
            $"only {revolutions} whole revolution(s) timed; at least three are needed for a period with an error: record longer"))
        : null;

    /// <summary>Event times: fewer than <see cref="MinimumRevolutions"/> intervals between events.</summary>
    public static RunFinding? FewIntervals(string file, int intervals) => intervals < MinimumRevolutions
        ? new(RunFlag.FewRevolutions, Warn(file, "few-revolutions",
            $"only {intervals} interval(s) between events; at least three are needed for a period with an error: record longer"))
        : null;

    /// <summary>Event times: no interval within a segment, so nothing to time.</summary>
    public static RunFinding? NoIntervals(string file, int events, int intervals) => intervals == 0
        ? new(RunFlag.NotTurning, Info(file, "not-turning", events switch
        {
            0 => "no events: the run does not turn, and there is no interval to time; it is left out of the onset fits",
            1 => "only one event: no interval can be timed; the run is left out of the onset fits",
            _ => $"{events} events, but a gap in the record lies between every two of them: no interval can be timed; the run is left out of the onset fits",
        }))
        : null;

    /// <summary>The measured period differs from π/√(ab) by more than <see cref="FarFromOnsetTolerance"/>.</summary>
    public static RunFinding? FarFromOnset(string file, double measured, double fromBottleneck)
    {
        if (!double.IsFinite(measured) || !double.IsFinite(fromBottleneck))
        {
            return null;
        }

        var ratio = measured / fromBottleneck;
        return Math.Abs(ratio - 1) > FarFromOnsetTolerance
            ? new(RunFlag.FarFromOnset, Info(file, "far-from-onset", string.Create(Inv,
                $"measured period / π√(1/ab) = {ratio:F2}: the run is far from onset, where the normal form describes only part of the period")))
            : null;
    }

    /// <summary>
    /// ∮dθ/θ̇ differs from the measured period by more than <see cref="FieldPeriodStandardErrors"/> combined standard
    /// errors and more than <see cref="FieldPeriodTolerance"/> of it.
    /// </summary>
    public static RunFinding? FieldPeriodMismatch(string file, Estimate measured, Estimate fromField)
    {
        if (!double.IsFinite(measured.Value) || !double.IsFinite(fromField.Value))
        {
            return null;
        }

        var se = Math.Sqrt((measured.StandardError * measured.StandardError) + (fromField.StandardError * fromField.StandardError));
        var diff = Math.Abs(fromField.Value - measured.Value);
        return double.IsFinite(se) && diff > FieldPeriodStandardErrors * se && diff > FieldPeriodTolerance * measured.Value
            ? new(RunFlag.FieldPeriodMismatch, Warn(file, "field-period-mismatch", string.Create(Inv,
                $"∮dθ/θ̇ = {Numerics.ErrorDigits.Plain(fromField.Value, 4)} differs from the measured period {Numerics.ErrorDigits.Plain(measured.Value, 4)} by more than three standard errors: the reconstructed field is distorted (oversmoothed or coarse sampling)")))
            : null;
    }

    /// <summary>
    /// Fewer than <see cref="MinimumSamplesPerPassage"/> samples per bottleneck passage: the time spent within one width
    /// of θ* (half of π/√(ab)) over the typical sampling interval.
    /// </summary>
    public static RunFinding? CoarseSampling(string file, double periodFromBottleneck, double samplingInterval)
    {
        var passage = periodFromBottleneck / 2;
        return double.IsFinite(passage) && passage / samplingInterval < MinimumSamplesPerPassage
            ? new(RunFlag.CoarseSampling, Warn(file, "coarse-sampling", string.Create(Inv,
                $"about {passage / samplingInterval:F0} samples per bottleneck passage; at least 10 are needed to see its shape: sample faster")))
            : null;
    }

    /// <summary>
    /// a changes on halving the fit window by more than <see cref="WindowBiasStandardErrors"/> of its standard errors
    /// and more than <see cref="WindowBiasTolerance"/> of its value: the field is not quadratic over the window.
    /// </summary>
    public static RunFinding? WindowBias(string file, BottleneckFit bottleneck)
    {
        ArgumentNullException.ThrowIfNull(bottleneck);
        var bias = bottleneck.QuarticBias;
        return double.IsFinite(bias) && double.IsFinite(bottleneck.A.StandardError)
            && Math.Abs(bias) > WindowBiasStandardErrors * bottleneck.A.StandardError && Math.Abs(bias) > WindowBiasTolerance * Math.Abs(bottleneck.A.Value)
            ? new(RunFlag.WindowBias, Info(file, "window-bias", string.Create(Inv,
                $"a changes by {Numerics.ErrorDigits.Plain(bias, 3)} when the fit window is halved: the field is not quadratic over the window")))
            : null;
    }

    /// <summary>Phase diffusion shortens the bottleneck passage (<see cref="NoiseEstimate.NoiseDominated"/>).</summary>
    public static RunFinding? NoiseDominated(string file, NoiseEstimate? noise) => noise is { NoiseDominated: true }
        ? new(RunFlag.NoiseDominated, Warn(file, "noise-dominated", string.Create(Inv,
            $"phase diffusion D = {Numerics.ErrorDigits.Plain(noise.Diffusion.Value, 3)} ± {Numerics.ErrorDigits.Plain(noise.Diffusion.StandardError, 2)} shortens the bottleneck passage to {noise.PassageRatio:P0} of π/√(ab): noise, not the bottleneck, sets the period; the run is left out of the onset fits")))
        : null;

    /// <summary>
    /// Both behaviours in one run: it turned, then rested for the last <see cref="RestFraction"/> of the record, or the
    /// reverse (see <see cref="RestFraction"/> for what counts as a rest).
    /// </summary>
    /// <param name="file">The run file.</param>
    /// <param name="time">Sample times of the smoothed samples.</param>
    /// <param name="phase">The smoothed, unwrapped phase.</param>
    /// <param name="period">The measured period.</param>
    public static RunFinding? MixedBehaviour(string file, double[] time, double[] phase, double period)
    {
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(phase);
        var quarter = RestFraction * (time[^1] - time[0]);
        if (!double.IsFinite(period) || !(quarter > RestMinimumPeriods * period))
        {
            return null;
        }

        var lastStart = Array.FindIndex(time, x => x >= time[^1] - quarter);
        var firstEnd = Array.FindLastIndex(time, x => x <= time[0] + quarter);
        var restsLast = lastStart > 0 && (phase[^1] - phase[lastStart]) / (2 * Math.PI) < RestMaximumTurns;
        var restsFirst = firstEnd > 0 && (phase[firstEnd] - phase[0]) / (2 * Math.PI) < RestMaximumTurns;
        if (!restsLast && !restsFirst)
        {
            return null;
        }

        return new(RunFlag.MixedBehaviour, Warn(file, "mixed-behaviour", restsLast
            ? "the run turns and then comes to rest: both behaviours at one parameter value (bistability or drift of the parameter)"
            : "the run rests and then starts to turn: both behaviours at one parameter value (bistability or drift of the parameter)"));
    }

    private static Diagnostic Warn(string file, string code, string message) => new(Severity.Warning, code, message, file);

    private static Diagnostic Info(string file, string code, string message) => new(Severity.Info, code, message, file);
}
