using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Onset;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Ingest;

public class StateSpaceAccuracyTests(ITestOutputHelper output)
{
    // Distances above onset (μA/cm²) of the runs; the onset itself is computed from the model (see below).
    private static readonly double[] Above = [0.25, 0.5, 1, 1.75, 2.5, 3.5, 5, 7];

    // Onset: the fold (local maximum) of the steady-state current I∞(V) of the model as coded, solved by bisection on
    // the analytic dI∞/dV to 1e-13 mV (MorrisLecar.RestSaddleNode); for this set it is ≈ 39.96 μA/cm² (from memory).
    private static readonly Lazy<(double Onset, RunRecording[] Positions, RunRecording[] Spikes, double[] Currents)> Runs = new(Simulate);

    private static (double, RunRecording[], RunRecording[], double[]) Simulate()
    {
        var model = MorrisLecar.ClassOne;
        var (onset, _) = model.RestSaddleNode();
        var currents = Above.Select(d => onset + d).ToArray();
        var positions = new RunRecording[currents.Length];
        var spikes = new RunRecording[currents.Length];
        for (var i = 0; i < currents.Length; i++)
        {
            var clean = model.Simulate(currents[i], spikes: 6);
            // Recording noise: 0.1 mV on V and 5·10⁻⁴ on w (invented demo levels, a few thousandths of each range).
            var noise = GaussianSource.Create(500 + i, stream: 3);
            var track = clean with
            {
                V = [.. clean.V.Select(v => v + (0.1 * noise.Next()))],
                W = [.. clean.W.Select(w => w + (5e-4 * noise.Next()))],
            };
            var name = $"ml{i}";
            positions[i] = new PositionRecording(name, track.Time, track.V, track.W, [0], YDown: false);
            spikes[i] = new EventRecording(name, SpikeTimes(clean), [0]);
        }

        return (onset, positions, spikes, currents);
    }

    /// <summary>Upward crossings of V = 0 mV, linearly interpolated.</summary>
    private static double[] SpikeTimes(StateTrack t)
    {
        var result = new List<double>();
        for (var i = 1; i < t.Time.Length; i++)
        {
            if (t.V[i - 1] < 0 && t.V[i] >= 0)
            {
                var f = -t.V[i - 1] / (t.V[i] - t.V[i - 1]);
                result.Add(t.Time[i - 1] + (f * (t.Time[i] - t.Time[i - 1])));
            }
        }

        return [.. result];
    }

    [Fact]
    public void Onset_FromMorrisLecarPositions_IsWithinTwoPercentOfSpan()
    {
        var (onset, positions, _, currents) = Runs.Value;
        var runs = positions.Select((p, i) => RecordingAnalyzer.Analyze(p, currents[i], p.File, null, null, []).Value!).ToList();
        var report = OnsetAnalysis.Combine(runs);
        Log(onset, report);
        var span = currents[^1] - currents[0];
        // Requirement of the issue: within 2% of the span of the run parameters, by both routes. The period route fits
        // T = α(μ−μc)^−½ + β + γ(μ−μc)^½ here (the spike adds a nearly constant time): its error is 1.2·10⁻³, 0.02% of the
        // span (the polynomial in T⁻² was 0.031 off); 0.1% leaves a factor five.
        Assert.InRange(Math.Abs(report.FromBottleneck.Value - onset), 0, 0.02 * span);
        Assert.InRange(Math.Abs(report.FromPeriod.Value - onset), 0, 0.001 * span);
        Assert.Equal(OnsetLaw.SquareRootWithOffset, report.FromPeriod.Curve?.Law);
        // The (V, w) orbit is not an ellipse: the phase is a protophase and the report says so.
        Assert.All(report.Runs, r => Assert.Contains(RunFlag.NotAnEllipse, r.Flags));
        Assert.All(report.Runs, r => Assert.Contains(r.Diagnostics, d => d.Code == "not-an-ellipse" && d.Message.Contains("protophase", StringComparison.Ordinal)));
    }

    [Fact]
    public void Onset_FromMorrisLecarSpikeTimes_IsWithinTwoPercentOfSpanByThePeriodRoute()
    {
        var (onset, _, spikes, currents) = Runs.Value;
        var runs = spikes.Select((p, i) => RecordingAnalyzer.Analyze(p, currents[i], p.File, null, null, []).Value!).ToList();
        var report = OnsetAnalysis.Combine(runs);
        Log(onset, report);
        var span = currents[^1] - currents[0];
        Assert.False(report.FromBottleneck.IsAvailable);
        Assert.Contains(report.Diagnostics, d => d.Code == "bottleneck-not-available");
        Assert.InRange(Math.Abs(report.FromPeriod.Value - onset), 0, 0.001 * span);
        Assert.Equal(OnsetLaw.SquareRootWithOffset, report.FromPeriod.Curve?.Law);
        Assert.True(double.IsFinite(report.FromPeriod.Ci95.Low) && double.IsFinite(report.FromPeriod.Ci95.High));

        // The truncated law does not fit the periods within their errors; the report must say so (see the coverage test below).
        Assert.Contains(report.Diagnostics, d => d.Code == "law-misfit" && d.Message.Contains("period route", StringComparison.Ordinal));

        // Spike times alone still tell the kind of onset: Morris–Lecar with this set is class I, a saddle-node on the
        // invariant circle (Rinzel & Ermentrout 1998, from memory), and the periods' exponent and laws say so.
        Assert.Equal(NormalFormFit.Scaling.OnsetKind.SaddleNodeOnCircle, report.Verdict.Kind);
        Assert.Contains("event times carry no phase velocity", report.Verdict.Evidence, StringComparison.Ordinal);
    }

    /// <summary>
    /// The period route's interval covers the Morris–Lecar fold. The periods are nearly noise-free, so what decides is
    /// the truncation of T = Σ cₖd^((k−1)/2): with 8 runs AICc keeps three terms (39.9619 [39.9612, 39.9626], which
    /// misses 39.9632), and the Birge ratio treats the smooth misfit as scatter. The best law misfits (χ²/dof ≈ 3·10⁴
    /// on noise-free periods), so the next order (+ δd, 39.9630) enters the Akaike-weighted average with the best's
    /// weight, and the unconditional error of Burnham &amp; Anderson (2002, eq. 4.9) carries their disagreement: measured
    /// 39.9625 [39.9610, 39.9639]. The report says why by `period-law-truncated` and `law-misfit`.
    /// </summary>
    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void PeriodInterval_CoversTheMorrisLecarOnset_AndTheTruncationIsReported(bool spikeTimes)
    {
        var (onset, positions, spikes, currents) = Runs.Value;
        var runs = (spikeTimes ? spikes : positions)
            .Select((p, i) => RecordingAnalyzer.Analyze(p, currents[i], p.File, null, null, []).Value!).ToList();
        var report = OnsetAnalysis.Combine(runs);
        Log(onset, report);
        Assert.True(report.FromPeriod.Ci95.Contains(onset), $"period {report.FromPeriod.Value} [{report.FromPeriod.Ci95.Low}, {report.FromPeriod.Ci95.High}] against the fold {onset}");
        Assert.Contains(report.AllDiagnostics, d => d.Code == "period-law-truncated");
        Assert.Contains(report.AllDiagnostics, d => d.Code == "law-misfit" && d.Message.Contains("period route", StringComparison.Ordinal));
        // Not wider than it needs to be: the interval stays within 0.1 % of the span of the runs (0.0068 μA/cm²).
        Assert.InRange(report.FromPeriod.Ci95.Width, 0, 0.001 * (currents[^1] - currents[0]));
    }

    private void Log(double onset, AnalysisReport report)
    {
        output.WriteLine($"onset (fold of I∞) {onset:R}");
        foreach (var r in report.Runs)
        {
            output.WriteLine($"{r.Param}: kind={r.InputKind} a={r.Bottleneck?.A} b={r.Bottleneck?.B} T={r.Period?.Measured} revs={r.Period?.Revolutions} flags={string.Join(",", r.Flags)} rms={r.Orbit?.RmsDeviation}");
        }

        foreach (var e in new[] { report.FromBottleneck, report.FromPeriod })
        {
            output.WriteLine($"{e.Route}: {e.Value} ± {e.StandardError} [{e.Ci95.Low}, {e.Ci95.High}] runs {e.Runs}");
        }

        output.WriteLine($"kind of onset: {report.Verdict.Kind}: {report.Verdict.Evidence}");
    }
}
