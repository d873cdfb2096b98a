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

    /// <summary>Defaults.</summary>
    public static RunOptions Default { get; } = new();
}

/// <summary>
/// One run from trajectory to <see cref="RunResult"/>: smoothing spline → θ̇ → field on the circle →
/// bottleneck normal form → periods (measured and predicted) → flags. Pure: same input, same result. O(n).
/// </summary>
public static class RunAnalyzer
{
    private const int MinSegment = 8;

    /// <summary>Analyses one run.</summary>
    public static RunResult Analyze(Trajectory trajectory, double param, string file, string? label = null, RunOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(trajectory);
        options ??= RunOptions.Default;
        var diags = new List<Diagnostic>();
        var flags = new List<string>();
        var n = trajectory.Count;
        var t = trajectory.Time;
        var duration = n > 0 ? t[^1] - t[0] : 0;
        if (trajectory.LargeSteps > 0)
        {
            flags.Add(RunFlags.UnsafeUnwrap);
            diags.Add(Warn(file, "unsafe-unwrap",
                $"{trajectory.LargeSteps} step(s) between samples are near π: the phase cannot be unwrapped safely there; sample faster"));
        }

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
            if (e - s < MinSegment)
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
        if (usedCount < MinSegment)
        {
            diags.Add(Warn(file, "too-short", $"only {usedCount} usable samples; a run needs at least {MinSegment} consecutive samples"));
            return new RunResult(file, param, label, n, duration, 0, trajectory.Direction, null, null, null, null, [RunFlags.NotTurning, .. flags], diags);
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
        if (turns < 1)
        {
            flags.Add(RunFlags.NotTurning);
            diags.Add(Info(file, "not-turning", string.Create(CultureInfo.InvariantCulture,
                $"the phase advances only {turns:F2} turns: the run does not turn (below onset?); no period is measured")));
            var relaxation = Relaxation.Fit(tt, raw, ph, smoothing.NoiseSd);
            diags.Add(relaxation is null
                ? Info(file, "no-relaxation", "the run does not settle visibly inside the record (or starts at rest): no relaxation rate")
                : Info(file, "relaxation", string.Create(CultureInfo.InvariantCulture,
                    $"the phase settles at {relaxation.RestPhase:F3} rad with relaxation rate κ = {relaxation.Rate.Value:G4} ± {relaxation.Rate.StandardError:G2}")));
            return new RunResult(file, param, label, n, duration, turns, trajectory.Direction, smoothing, null, null, null, flags, diags) { Relaxation = relaxation };
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
        if (bottleneck is null)
        {
            flags.Add(RunFlags.NoBottleneck);
            diags.Add(Warn(file, "no-bottleneck", "no parabola opening upward fits the slowest part of θ̇(θ): the run shows no bottleneck"));
        }

        var reference = RevolutionBlocks.Wrap((bottleneck?.Phase.Value ?? slow) + Math.PI);
        var periods = PeriodMeasurement.Measure(tt, ph, segs, double.IsFinite(reference) ? reference : 0.0);
        var fromBottleneck = bottleneck?.PassageTime ?? new Estimate(double.NaN, double.NaN);
        var summary = new PeriodSummary(periods.Mean, fromBottleneck, field.Period, periods.Revolutions);

        if (periods.Revolutions < 3)
        {
            flags.Add(RunFlags.FewRevolutions);
            diags.Add(Warn(file, "few-revolutions",
                $"only {periods.Revolutions} whole revolution(s) timed; at least three are needed for a period with an error: record longer"));
        }

        var measured = periods.Mean.Value;
        if (double.IsFinite(measured) && double.IsFinite(fromBottleneck.Value))
        {
            var ratio = measured / fromBottleneck.Value;
            if (Math.Abs(ratio - 1) > 0.25)
            {
                flags.Add(RunFlags.FarFromOnset);
                diags.Add(Info(file, "far-from-onset", string.Create(CultureInfo.InvariantCulture,
                    $"measured period / π√(1/ab) = {ratio:F2}: the run is far from onset, where the normal form describes only part of the period")));
            }
        }

        if (double.IsFinite(measured) && double.IsFinite(field.Period.Value))
        {
            var se = Math.Sqrt(Sq(periods.Mean.StandardError) + Sq(field.Period.StandardError));
            var diff = Math.Abs(field.Period.Value - measured);
            if (double.IsFinite(se) && diff > 3 * se && diff > 0.02 * measured)
            {
                flags.Add(RunFlags.FieldPeriodMismatch);
                diags.Add(Warn(file, "field-period-mismatch", string.Create(CultureInfo.InvariantCulture,
                    $"∮dθ/θ̇ = {field.Period.Value:G4} differs from the measured period {measured:G4} by more than three standard errors: the reconstructed field is distorted (oversmoothed or coarse sampling)")));
            }
        }

        if (bottleneck is not null)
        {
            // Samples per bottleneck passage: time spent within one width of θ*, over the sampling interval.
            var dtTypical = duration / Math.Max(n - 1, 1);
            var passage = fromBottleneck.Value / 2;
            if (double.IsFinite(passage) && passage / dtTypical < 10)
            {
                flags.Add(RunFlags.CoarseSampling);
                diags.Add(Warn(file, "coarse-sampling", string.Create(CultureInfo.InvariantCulture,
                    $"about {passage / dtTypical:F0} samples per bottleneck passage; at least 10 are needed to see its shape: sample faster")));
            }

            if (double.IsFinite(bottleneck.QuarticBias) && double.IsFinite(bottleneck.A.StandardError)
                && Math.Abs(bottleneck.QuarticBias) > 3 * bottleneck.A.StandardError && Math.Abs(bottleneck.QuarticBias) > 0.05 * Math.Abs(bottleneck.A.Value))
            {
                flags.Add(RunFlags.WindowBias);
                diags.Add(Info(file, "window-bias", string.Create(CultureInfo.InvariantCulture,
                    $"a changes by {bottleneck.QuarticBias:G3} when the fit window is halved: the field is not quadratic over the window")));
            }
        }

        var noise = PhaseDiffusion.Estimate(tt, raw, segs, field, bottleneck);
        if (noise is { NoiseDominated: true })
        {
            flags.Add(RunFlags.NoiseDominated);
            diags.Add(Warn(file, "noise-dominated", string.Create(CultureInfo.InvariantCulture,
                $"phase diffusion D = {noise.Diffusion.Value:G3} ± {noise.Diffusion.StandardError:G2} shortens the bottleneck passage to {noise.PassageRatio:P0} of π/√(ab): noise, not the bottleneck, sets the period; the run is left out of the onset fits")));
        }

        // Both behaviours in one run: it turned, then rested for the last quarter of the record, or the reverse. A quarter
        // longer than two periods with less than a tenth of a turn in it is a rest, not a slow bottleneck passage
        // (common practice, no source).
        var quarter = 0.25 * (tt[^1] - tt[0]);
        if (double.IsFinite(measured) && quarter > 2 * measured)
        {
            var lastStart = Array.FindIndex(tt, x => x >= tt[^1] - quarter);
            var firstEnd = Array.FindLastIndex(tt, x => x <= tt[0] + quarter);
            var restsLast = lastStart > 0 && (ph[^1] - ph[lastStart]) / (2 * Math.PI) < 0.1;
            var restsFirst = firstEnd > 0 && (ph[firstEnd] - ph[0]) / (2 * Math.PI) < 0.1;
            if (restsLast || restsFirst)
            {
                flags.Add(RunFlags.MixedBehaviour);
                diags.Add(Warn(file, "mixed-behaviour", restsLast
                    ? "the run turns and then comes to rest: both behaviours at one parameter value (bistability or drift of the parameter)"
                    : "the run rests and then starts to turn: both behaviours at one parameter value (bistability or drift of the parameter)"));
            }
        }

        return new RunResult(file, param, label, n, duration, turns, trajectory.Direction, smoothing, field, bottleneck, summary, flags, diags) { Noise = noise };
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

    /// <summary>Half the central difference of <paramref name="x"/> at each sample (one-sided at segment ends).</summary>
    private static double[] HalfCentralDifferences(double[] x, int[] segs)
    {
        var w = new double[x.Length];
        for (var k = 0; k < segs.Length; k++)
        {
            var s = segs[k];
            var e = k + 1 < segs.Length ? segs[k + 1] : x.Length;
            for (var i = s; i < e; i++)
            {
                var lo = i > s ? x[i - 1] : x[i];
                var hi = i + 1 < e ? x[i + 1] : x[i];
                w[i] = Math.Max(0.5 * (hi - lo), 0);
            }
        }

        return w;
    }

    private static double Sq(double x) => x * x;

    private static Diagnostic Warn(string file, string code, string message) => new(Severity.Warning, code, message, file);

    private static Diagnostic Info(string file, string code, string message) => new(Severity.Info, code, message, file);
}
