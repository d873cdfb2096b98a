using System.Globalization;
using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>
/// Any recording to a <see cref="RunResult"/>: phase through <see cref="RunAnalyzer"/>; positions through the ellipse
/// phase (<see cref="OrbitPhase"/>) and then <see cref="RunAnalyzer"/>; event times through
/// <see cref="EventRunAnalyzer"/> (periods only). Pure. Reader diagnostics are passed in so that they land in the
/// run's diagnostics and flags.
/// </summary>
public static class RecordingAnalyzer
{
    /// <summary>Analyses one recording; null with errors only when the positions do not trace an orbit.</summary>
    public static Loaded<RunResult> Analyze(RunRecording recording, double param, string file, string? label, RunOptions? options, IReadOnlyList<Diagnostic> readDiagnostics)
    {
        ArgumentNullException.ThrowIfNull(recording);
        ArgumentNullException.ThrowIfNull(readDiagnostics);
        var pre = readDiagnostics.Select(d => d with { File = file }).ToList();
        RunResult run;
        switch (recording.Kind)
        {
            case RecordingKind.Events:
                run = EventRunAnalyzer.Analyze(recording.Events!, param, file, label);
                break;
            case RecordingKind.Positions:
                var (phase, orbit, orbitDiags) = OrbitPhase.FromPositions(recording.Positions!);
                pre.AddRange(orbitDiags.Select(d => d with { File = file }));
                if (phase is null || orbit is null)
                {
                    return new Loaded<RunResult>(null, pre);
                }

                run = RunAnalyzer.Analyze(Trajectory.FromRecording(phase), param, file, label, options) with { InputKind = "positions", Orbit = orbit };
                if (!orbit.IsEllipse)
                {
                    run = run with { Flags = [.. run.Flags, RunFlags.NotAnEllipse] };
                }

                pre.Add(new Diagnostic(Severity.Info, "orbit", string.Create(CultureInfo.InvariantCulture,
                    $"ellipse centre ({orbit.Ellipse.CentreX:G5}, {orbit.Ellipse.CentreY:G5}), semi-axes {orbit.Ellipse.SemiMajor:G4} and {orbit.Ellipse.SemiMinor:G4}, tilt {orbit.Ellipse.Tilt * 180 / Math.PI:F1}°, RMS deviation {orbit.RmsDeviation:P2}; turning {orbit.Sense}"),
                    file));
                break;
            default:
                run = RunAnalyzer.Analyze(Trajectory.FromRecording(recording.Phase!), param, file, label, options);
                break;
        }

        if (pre.Any(d => d.Code == "large-gaps") && !run.Flags.Contains(RunFlags.LargeGaps))
        {
            run = run with { Flags = [.. run.Flags, RunFlags.LargeGaps] };
        }

        return new Loaded<RunResult>(run with { Diagnostics = [.. pre, .. run.Diagnostics] }, []);
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
    public static RunResult Analyze(EventRecording events, double param, string file, string? label = null)
    {
        ArgumentNullException.ThrowIfNull(events);
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

        var flags = new List<string> { RunFlags.PeriodsOnly };
        var diags = new List<Diagnostic>();
        var duration = n > 0 ? times[^1] - times[0] : 0;
        if (intervals.Count == 0)
        {
            flags.Add(RunFlags.NotTurning);
            diags.Add(new Diagnostic(Severity.Info, "not-turning",
                $"only {n} event(s) in a row: no interval can be timed; the run is left out of the onset fits", file));
            return new RunResult(file, param, label, n, duration, 0, 1, null, null, null, null, flags, diags) { InputKind = "events" };
        }

        var mean = intervals.Average();
        var se = Numerics.SampleStatistics.StandardErrorOfMean(intervals);
        if (intervals.Count < 3)
        {
            flags.Add(RunFlags.FewRevolutions);
            diags.Add(new Diagnostic(Severity.Warning, "few-revolutions",
                $"only {intervals.Count} interval(s) between events; at least three are needed for a period with an error: record longer", file));
        }

        var nan = new Estimate(double.NaN, double.NaN);
        var period = new PeriodSummary(new Estimate(mean, se), nan, nan, intervals.Count);
        return new RunResult(file, param, label, n, duration, intervals.Count, 1, null, null, null, period, flags, diags) { InputKind = "events" };
    }
}
