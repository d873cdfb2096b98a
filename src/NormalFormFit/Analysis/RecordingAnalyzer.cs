using System.Diagnostics;
using System.Globalization;
using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>
/// Any recording to a <see cref="RunResult"/>: phase through <see cref="RunAnalyzer"/>; positions through the ellipse
/// phase (<see cref="OrbitPhase"/>) and then <see cref="RunAnalyzer"/>; event times through
/// <see cref="EventRunAnalyzer"/> (periods only). Pure. Reader diagnostics are passed in so that they land in the
/// run's diagnostics and flags (<see cref="RunSource"/>).
/// </summary>
public static class RecordingAnalyzer
{
    /// <summary>Analyses one recording; null with errors only when the positions do not trace an orbit.</summary>
    public static Loaded<RunResult> Analyze(RunRecording recording, double param, string file, string? label, RunOptions? options, IReadOnlyList<Diagnostic> readDiagnostics) =>
        Analyze(recording, param, file, label, options, readDiagnostics, null);

    /// <summary>
    /// Analyses one recording. Positions that do not wind round an orbit of their own are read on
    /// <paramref name="sharedOrbit"/> when one is given (a run at rest among runs that turn). Null with errors when the
    /// positions trace no orbit or a phase column does not behave like a phase (<see cref="PhaseChecks.NotAPhase"/>).
    /// </summary>
    public static Loaded<RunResult> Analyze(RunRecording recording, double param, string file, string? label, RunOptions? options, IReadOnlyList<Diagnostic> readDiagnostics, Ellipse? sharedOrbit) =>
        Analyze(recording, param, file, label, options, readDiagnostics, sharedOrbit, null);

    /// <summary>
    /// As above, with the events of a single signal already detected (<paramref name="detected"/>, from
    /// <see cref="SignalEvents.Detect"/> with the same options; null: detected here), so that a set can choose its
    /// embedding from its runs' events (<see cref="SignalEmbedding.FromRuns"/>) without detecting them twice.
    /// </summary>
    public static Loaded<RunResult> Analyze(RunRecording recording, double param, string file, string? label, RunOptions? options, IReadOnlyList<Diagnostic> readDiagnostics, Ellipse? sharedOrbit, Loaded<DetectedEvents>? detected)
    {
        ArgumentNullException.ThrowIfNull(recording);
        ArgumentNullException.ThrowIfNull(readDiagnostics);
        var pre = readDiagnostics.Select(d => d with { File = file }).ToList();
        switch (recording)
        {
            case EventRecording events:
                return new Loaded<RunResult>(EventRunAnalyzer.Analyze(events, param, file, label, pre) with { Dropped = events.Dropped }, []);
            case SignalRecording signal:
                return FromSignal(signal, param, file, label, options, pre, detected);
            case PositionRecording positions:
                var (phase, orbit, orbitDiags) = OrbitPhase.FromPositions(positions, sharedOrbit);
                pre.AddRange(orbitDiags.Select(d => d with { File = file }));
                if (phase is null || orbit is null)
                {
                    return new Loaded<RunResult>(null, pre);
                }

                pre.Add(new Diagnostic(Severity.Info, "orbit", string.Create(CultureInfo.InvariantCulture,
                    $"ellipse centre ({Numerics.ErrorDigits.Plain(orbit.Ellipse.CentreX, 5)}, {Numerics.ErrorDigits.Plain(orbit.Ellipse.CentreY, 5)}), semi-axes {Numerics.ErrorDigits.Plain(orbit.Ellipse.SemiMajor, 4)} and {Numerics.ErrorDigits.Plain(orbit.Ellipse.SemiMinor, 4)}, tilt {orbit.Ellipse.Tilt * 180 / Math.PI:F1}°, RMS deviation {orbit.RmsDeviation:P2}; turning {orbit.Sense}"),
                    file));
                var fromPositions = FromPhase(phase, param, file, label, options, RecordingKind.Positions, orbit, pre);
                return fromPositions.Value is { } run
                    ? new Loaded<RunResult>(run with { OrbitView = OrbitView.From(positions, phase, orbit.Ellipse, run.Bottleneck?.Phase.Value ?? double.NaN, run.Direction) }, fromPositions.Diagnostics)
                    : fromPositions;
            case PhaseRecording phaseRecording:
                if (PhaseChecks.NotAPhase(phaseRecording) is { } notAPhase)
                {
                    return new Loaded<RunResult>(null, [.. pre, notAPhase with { File = file }]);
                }

                return FromPhase(phaseRecording, param, file, label, options, RecordingKind.Phase, null, pre);
            default:
                throw new UnreachableException($"no analysis for a recording of kind {recording.Kind}");
        }
    }

    /// <summary>Events detected in the signal (<see cref="SignalEvents"/>), then periods as for event times.</summary>
    private static Loaded<RunResult> FromSignal(SignalRecording signal, double param, string file, string? label, RunOptions? options, List<Diagnostic> pre, Loaded<DetectedEvents>? given)
    {
        var detected = given ?? SignalEvents.Detect(signal, (options ?? RunOptions.Default).SignalEvents);
        if (detected.Value is not { } found)
        {
            return new Loaded<RunResult>(null, [.. pre, .. detected.Diagnostics.Select(d => d with { File = file })]);
        }

        var s = found.Summary;
        var ic = CultureInfo.InvariantCulture;
        var su = ColumnNames.SplitParameterName(s.Column).Unit is { } signalUnit ? " " + signalUnit : string.Empty;
        var tu = signal.TimeUnit is { } timeUnit ? " " + timeUnit : string.Empty;
        pre.Add(double.IsFinite(s.Threshold)
            ? new Diagnostic(Severity.Info, "signal-events", string.Create(ic,
                $"{s.Count} event(s) in column '{s.Column}': upward crossings of {Numerics.ErrorDigits.Plain(s.Threshold, 5)}{su} ({(s.ThresholdGiven ? "given" : $"halfway from the baseline {Numerics.ErrorDigits.Plain(s.Baseline, 5)}{su} to the tip level {Numerics.ErrorDigits.Plain(s.TipLevel, 5)}{su}")}), hysteresis {Numerics.ErrorDigits.Plain(s.Hysteresis, 4)}{su}, refractory time {Numerics.ErrorDigits.Plain(s.RefractoryTime, 4)}{tu}; {s.Glitches} glitch(es) and {s.WithinRefractory} crossing(s) within the refractory time left out"),
                file)
            : new Diagnostic(Severity.Info, "signal-silent", string.Create(ic,
                $"column '{s.Column}' has no excursions of one height standing {2 * SignalEvents.ClearOfNoise:G} noise standard deviations ({Numerics.ErrorDigits.Plain(2 * SignalEvents.ClearOfNoise * s.NoiseSd, 3)}{su}) above its median {Numerics.ErrorDigits.Plain(s.Baseline, 5)}{su}: no events, a run that does not turn; give --event-threshold if the events are smaller"),
                file));
        // A protophase from the delay-embedded orbit gives the bottleneck; without one the run keeps its periods only.
        var (phase, orbit, orbitDiags) = (options ?? RunOptions.Default).SignalEvents.Protophase
            ? SignalPhase.FromSignal(signal, found, (options ?? RunOptions.Default).SignalEvents.Embedding)
            : (null, null, []);
        pre.AddRange(orbitDiags.Select(d => d with { File = file }));
        if (phase is not null && orbit is not null)
        {
            pre.Add(new Diagnostic(Severity.Info, "signal-orbit", string.Create(ic,
                $"protophase: angle about ({Numerics.ErrorDigits.Plain(orbit.CentreX, 4)}, {Numerics.ErrorDigits.Plain(orbit.CentreY, 4)}){su} on the orbit (s(t), s(t − {Numerics.ErrorDigits.Plain(orbit.Delay, 3)}{tu})), delay {orbit.DelayRule}; backward fraction {orbit.BackwardFraction:P1}; {orbit.Cycles - orbit.CyclesLeftOut} of {orbit.Cycles} cycle(s) monotone"),
                file));
            var fromPhase = FromPhase(phase, param, file, label, options, RecordingKind.Signal, null, pre);
            if (fromPhase.Value is { } phased)
            {
                // The measured period is the events' (every interval, as without a protophase): cycles left out of the
                // protophase and the segments they split it into do not cost the period route any intervals, and the
                // period route gives the same answer with and without the protophase.
                var byEvents = EventRunAnalyzer.Analyze(found.Events, param, file, label).Period;
                var nan = new Estimate(double.NaN, double.NaN);
                var period = byEvents is null ? phased.Period
                    : phased.Period is { } p ? p with { Measured = byEvents.Measured, Revolutions = byEvents.Revolutions }
                    : new PeriodSummary(byEvents.Measured, nan, nan, byEvents.Revolutions);
                return new Loaded<RunResult>(phased with
                {
                    Events = s,
                    SignalOrbit = orbit,
                    SignalOrbitView = SignalOrbitView.From(signal, phase, orbit, phased.Bottleneck?.Phase.Value ?? double.NaN, phased.Direction),
                    Dropped = signal.Dropped,
                    Period = period,
                }, fromPhase.Diagnostics);
            }

            return fromPhase;
        }

        var run = EventRunAnalyzer.Analyze(found.Events, param, file, label, pre);
        return new Loaded<RunResult>(run with { InputKind = RecordingKind.Signal, Events = s, Dropped = signal.Dropped, Samples = signal.Count, Duration = signal.Time[^1] - signal.Time[0] }, []);
    }

    /// <summary>Isolated jumps out, gaps bridged or split (<see cref="Trajectory.FromRecording"/>), then the run analysis.</summary>
    private static Loaded<RunResult> FromPhase(PhaseRecording phase, double param, string file, string? label, RunOptions? options, RecordingKind kind, OrbitSummary? orbit, List<Diagnostic> pre)
    {
        var (clean, jumps) = PhaseChecks.RejectIsolatedJumps(phase);
        var ic = CultureInfo.InvariantCulture;
        if (jumps > 0)
        {
            pre.Add(new Diagnostic(Severity.Info, "phase-jumps", string.Create(ic,
                $"{jumps} sample(s) jump away from both neighbours and straight back (not a slip) and are not used"), file));
        }

        var trajectory = Trajectory.FromRecording(clean);
        if (trajectory.SplitGaps > 0)
        {
            pre.Add(new Diagnostic(Severity.Warning, "large-gaps", string.Create(ic,
                $"{trajectory.SplitGaps} gap(s) longer than half the local revolution time: the phase cannot be followed across them, and the run is analysed in {trajectory.SegmentStarts.Length} segments; check for lost frames or paused recording"),
                file));
        }

        var dropped = phase.Dropped with { PhaseJumps = phase.Dropped.PhaseJumps + jumps };
        var source = new RunSource(kind, orbit, pre) { Dropped = dropped, TimeUnit = phase.TimeUnit };
        return new Loaded<RunResult>(RunAnalyzer.Analyze(trajectory, param, file, label, options, source), []);
    }
}

/// <summary>Event times (spikes, once-per-turn pulses) to a periods-only <see cref="RunResult"/>.</summary>
/// <remarks>
/// Period = mean inter-event interval within segments (never across a gap), standard error SD/√N treating the
/// intervals as independent (exact for a renewal process; common practice, no source). Minimum: three events for a
/// period with an error. Cost O(n). The bottleneck cannot be seen from event times: Bottleneck and Field are null.
/// </remarks>
public static class EventRunAnalyzer
{
    /// <summary>Analyses one run of event times.</summary>
    /// <param name="events">The event times.</param>
    /// <param name="param">Control parameter μ.</param>
    /// <param name="file">Run file as named in the manifest.</param>
    /// <param name="label">Optional label.</param>
    /// <param name="readDiagnostics">Diagnostics of reading the file, naming the run file (none when null).</param>
    public static RunResult Analyze(EventRecording events, double param, string file, string? label = null, IReadOnlyList<Diagnostic>? readDiagnostics = null)
    {
        ArgumentNullException.ThrowIfNull(events);
        var source = new RunSource(RecordingKind.Events, null, readDiagnostics ?? []);
        var times = events.Times;
        var n = times.Length;
        var intervals = new List<double>();
        for (var k = 0; k < events.SegmentStarts.Length; k++)
        {
            var s = events.SegmentStarts[k];
            var e = k + 1 < events.SegmentStarts.Length ? events.SegmentStarts[k + 1] : n;
            for (var i = s + 1; i < e; i++)
            {
                intervals.Add(times[i] - times[i - 1]);
            }
        }

        // Event times carry periods only: that flag comes first.
        var found = new RunFindings(source.Diagnostics);
        found.Flags.Add(RunFlag.PeriodsOnly);

        var duration = n > 0 ? times[^1] - times[0] : 0;
        if (RunChecks.NoIntervals(file, n, intervals.Count) is { } none)
        {
            found.Raise(none);
            return new RunResult(file, param, label, n, duration, 0, 1, null, null, null, null, [.. found.Flags, .. source.Flags], found.Diagnostics) { InputKind = RecordingKind.Events };
        }

        var mean = intervals.Average();
        var se = Numerics.SampleStatistics.StandardErrorOfMean(intervals);
        found.Raise(RunChecks.FewIntervals(file, intervals.Count));

        var nan = new Estimate(double.NaN, double.NaN);
        var period = new PeriodSummary(new Estimate(mean, se), nan, nan, intervals.Count);
        return new RunResult(file, param, label, n, duration, intervals.Count, 1, null, null, null, period, [.. found.Flags, .. source.Flags], found.Diagnostics)
        {
            InputKind = RecordingKind.Events,
        };
    }
}
