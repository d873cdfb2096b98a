using System.Globalization;
using NormalFormFit.Bottleneck;
using NormalFormFit.Field;
using NormalFormFit.Ingest;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Analysis;

/// <summary>Options of the per-run analysis.</summary>
public sealed record RunOptions
{
    /// <summary>Smoothing options.</summary>
    public SmoothingOptions Smoothing { get; init; } = SmoothingOptions.Default;

    /// <summary>Field options.</summary>
    public FieldOptions Field { get; init; } = FieldOptions.Default;

    /// <summary>Bottleneck options.</summary>
    public BottleneckOptions Bottleneck { get; init; } = BottleneckOptions.Default;

    /// <summary>How events are detected in a single-signal recording.</summary>
    public SignalEventOptions SignalEvents { get; init; } = SignalEventOptions.Default;

    /// <summary>
    /// Keep each run's sample times in <see cref="RunResult.SampleTimes"/> (for compare, whose replicates are sampled as
    /// the run was). Off by default: a manifest of long records would otherwise hold every run's time array until the end.
    /// </summary>
    public bool KeepSampleTimes { get; init; }

    /// <summary>Defaults.</summary>
    public static RunOptions Default { get; } = new();
}

/// <summary>
/// One run from trajectory to <see cref="RunResult"/>: smoothing spline → θ̇ → field on the circle →
/// bottleneck normal form → periods (measured and predicted) → the run checks (<see cref="RunChecks"/>).
/// Pure: same input, same result. O(n).
/// </summary>
public static class RunAnalyzer
{
    /// <summary>Analyses one run.</summary>
    /// <param name="trajectory">The phase trajectory.</param>
    /// <param name="param">Control parameter μ.</param>
    /// <param name="file">Run file as named in the manifest.</param>
    /// <param name="label">Optional label.</param>
    /// <param name="options">Analysis options (defaults when null).</param>
    /// <param name="source">What the trajectory was read from (a phase recording without remarks when null).</param>
    public static RunResult Analyze(Trajectory trajectory, double param, string file, string? label = null, RunOptions? options = null, RunSource? source = null)
    {
        ArgumentNullException.ThrowIfNull(trajectory);
        options ??= RunOptions.Default;
        source ??= RunSource.Phase;
        var n = trajectory.Count;
        var t = trajectory.Time;
        var duration = n > 0 ? t[^1] - t[0] : 0;
        var found = new RunFindings(source.Diagnostics);

        // The result, built once at the end of whichever path the run takes.
        RunResult Result(double turns, SmoothingSummary? smoothing, PhaseField? field, BottleneckFit? bottleneck, PeriodSummary? period,
            RelaxationFit? relaxation = null, NoiseEstimate? noise = null) =>
            new(file, param, label, n, duration, turns, trajectory.Direction, smoothing, field, bottleneck, period,
                [.. found.Flags, .. source.Flags], found.Diagnostics)
            {
                InputKind = source.Kind,
                Orbit = source.Orbit,
                Dropped = source.Dropped,
                SampleTimes = options.KeepSampleTimes ? t : null,
                Relaxation = relaxation,
                Noise = noise,
            };

        found.Raise(RunChecks.UnsafeUnwrap(file, trajectory.LargeSteps));

        // Smoothing, segment by segment.
        var smooth = new double[n];
        var speed = new double[n];
        var used = new bool[n];
        var firstLambda = double.NaN;
        SmoothingMethod? firstMethod = null;
        var ssq = 0.0;
        var dof = 0.0;
        var edf = 0.0;
        var longest = 0;
        for (var k = 0; k < trajectory.SegmentStarts.Length; k++)
        {
            var s = trajectory.SegmentStarts[k];
            var e = trajectory.SegmentEnd(k);
            if (e - s < RunChecks.MinimumSamples)
            {
                continue;
            }

            var fit = SegmentSmoother.Smooth(t.AsSpan(s, e - s), trajectory.Phase.AsSpan(s, e - s), options.Smoothing, smooth.AsSpan(s, e - s), speed.AsSpan(s, e - s));
            used.AsSpan(s, e - s).Fill(true);
            if (e - s > longest)
            {
                longest = e - s;
                firstLambda = fit.Lambda;
                firstMethod = fit.Method;
            }

            ssq += fit.ResidualVariance * (e - s - fit.EffectiveDegreesOfFreedom);
            dof += e - s - fit.EffectiveDegreesOfFreedom;
            edf += fit.EffectiveDegreesOfFreedom;
        }

        // Compact to the smoothed samples (no copies when every segment was smoothed: long records).
        var usedCount = used.Count(u => u);
        if (RunChecks.TooShort(file, usedCount) is { } tooShort)
        {
            // Not turning comes first among the flags of a run too short to analyse.
            found.Flags.Insert(0, tooShort.Flag);
            found.Diagnostics.Add(tooShort.Diagnostic);
            return Result(0, null, null, null, null);
        }

        double[] tt = t, ph = smooth, v = speed, raw = trajectory.Phase;
        if (usedCount < n)
        {
            var idx = Enumerable.Range(0, n).Where(i => used[i]).ToArray();
            tt = idx.Select(i => t[i]).ToArray();
            raw = idx.Select(i => trajectory.Phase[i]).ToArray();
            ph = idx.Select(i => smooth[i]).ToArray();
            v = idx.Select(i => speed[i]).ToArray();
        }

        var segs = CompactSegments(trajectory, used);
        var smoothing = new SmoothingSummary(firstLambda, dof > 0 ? Math.Sqrt(ssq / dof) : double.NaN, edf, firstMethod);
        var turns = (ph[^1] - ph[0]) / (2 * Math.PI);
        if (RunChecks.NotTurning(file, turns) is { } resting)
        {
            found.Raise(resting);
            var relaxation = Relaxation.Fit(tt, raw, ph, smoothing.NoiseSd);
            found.Diagnostics.Add(relaxation is null
                ? Info(file, "no-relaxation", "the run does not settle visibly inside the record (or starts at rest): no relaxation rate")
                : Info(file, "relaxation", string.Create(CultureInfo.InvariantCulture,
                    $"the phase settles at {relaxation.RestPhase:F3} rad with relaxation rate κ = {RateText(relaxation.Rate)} per {source.TimeUnit ?? "time unit"}")));
            return Result(turns, smoothing, null, null, null, relaxation: relaxation);
        }

        // Weights never depend on the noisy θ̇ itself (a weight ∝ θ̇ would bias every mean upward by var/mean):
        // the bottleneck fit weights samples by the time they cover; the field weights them by the time they
        // cover times a preliminary (time-weighted) field, which makes each bin a mean over phase.
        var dtWeight = HalfCentralDifferences(tt, segs);
        var prelimLabels = RevolutionBlocks.Label(ph, 0.0, out var prelimCount);
        var prelim = PhaseFieldEstimator.Estimate(ph, v, dtWeight, prelimLabels, prelimCount, options.Field with { BootstrapReplicates = 0 });
        var slow = BottleneckLocator.SlowestPhase(prelim);
        var cut = double.IsFinite(slow) ? slow + Math.PI : 0.0;
        var labels = RevolutionBlocks.Label(ph, cut, out var blocks);
        var phaseWeight = new double[ph.Length];
        for (var i = 0; i < ph.Length; i++)
        {
            phaseWeight[i] = dtWeight[i] * Math.Max(prelim.Interpolate(ph[i]), 0);
        }

        var field = PhaseFieldEstimator.Estimate(ph, v, phaseWeight, labels, blocks, options.Field with { Bins = prelim.Centres.Length });
        var bottleneck = BottleneckLocator.Locate(ph, v, dtWeight, labels, blocks, field, options.Bottleneck);
        found.Raise(RunChecks.NoBottleneck(file, bottleneck));

        var reference = RevolutionBlocks.Wrap((bottleneck?.Phase.Value ?? slow) + Math.PI);
        var periods = PeriodMeasurement.MeasureAroundFastSide(tt, ph, v, segs, double.IsFinite(reference) ? reference : 0.0);
        var fromBottleneck = bottleneck?.PassageTime ?? new Estimate(double.NaN, double.NaN);
        var summary = new PeriodSummary(periods.Mean, fromBottleneck, field.Period, periods.Revolutions);
        found.Raise(RunChecks.FewRevolutions(file, periods.Revolutions));
        found.Raise(RunChecks.FarFromOnset(file, periods.Mean.Value, fromBottleneck.Value));
        found.Raise(RunChecks.FieldPeriodMismatch(file, periods.Mean, field.Period));
        if (bottleneck is not null)
        {
            found.Raise(RunChecks.CoarseSampling(file, fromBottleneck.Value, duration / Math.Max(n - 1, 1)));
            found.Raise(RunChecks.WindowBias(file, bottleneck));
        }

        var noise = PhaseDiffusion.Estimate(tt, raw, segs, field, bottleneck);
        found.Raise(RunChecks.NoiseDominated(file, noise));
        found.Raise(RunChecks.MixedBehaviour(file, tt, ph, periods.Mean.Value));
        return Result(turns, smoothing, field, bottleneck, summary, noise: noise);
    }

    private static int[] CompactSegments(Trajectory trajectory, bool[] used)
    {
        var starts = new List<int>();
        var c = 0;
        for (var k = 0; k < trajectory.SegmentStarts.Length; k++)
        {
            var s = trajectory.SegmentStarts[k];
            var e = trajectory.SegmentEnd(k);
            if (e > s && used[s])
            {
                starts.Add(c);
                c += e - s;
            }
        }

        return [.. starts];
    }

    /// <summary>
    /// The time each sample covers: half the central difference of the times inside its segment (one-sided at segment
    /// ends), each side capped at 1.5 typical steps. The time inside a gap belongs to no sample: otherwise the samples at
    /// a gap's edges, whose speeds the spline determines worst (one-sided), would carry the gap's whole length as weight.
    /// Uniform and mildly jittered sampling keep their weights.
    /// </summary>
    private static double[] HalfCentralDifferences(double[] x, int[] segs)
    {
        var w = new double[x.Length];
        var typical = Trajectory.TypicalStep(x); // O(n): the median of at most 4097 evenly spread steps
        var cap = double.IsFinite(typical) ? 1.5 * typical : double.PositiveInfinity;
        for (var k = 0; k < segs.Length; k++)
        {
            var s = segs[k];
            var e = k + 1 < segs.Length ? segs[k + 1] : x.Length;
            for (var i = s; i < e; i++)
            {
                var below = i > s ? Math.Min(x[i] - x[i - 1], cap) : 0;
                var above = i + 1 < e ? Math.Min(x[i + 1] - x[i], cap) : 0;
                w[i] = Math.Max(0.5 * (below + above), 0);
            }
        }

        return w;
    }

    private static Diagnostic Info(string file, string code, string message) => new(Severity.Info, code, message, file);

    /// <summary>A rate with its standard error, the value to the error's second significant digit (<see cref="Numerics.ErrorDigits"/>).</summary>
    private static string RateText(Estimate rate) =>
        double.IsFinite(rate.StandardError) && rate.StandardError > 0
            ? rate.Value.ToString(Numerics.ErrorDigits.Format(rate.StandardError), CultureInfo.InvariantCulture) + " ± " + rate.StandardError.ToString(Numerics.ErrorDigits.Format(rate.StandardError), CultureInfo.InvariantCulture)
            : Numerics.ErrorDigits.Plain(rate.Value, 4);
}
