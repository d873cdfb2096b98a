using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// The <c>mixed-behaviour</c> run diagnostic: a run that turns and rests within one record (its parameter drifted, or
/// the system is bistable) is flagged; runs that turn throughout, slow down but keep turning, or end inside one slow
/// passage through the bottleneck are not.
/// </summary>
public class MixedBehaviourTests(ITestOutputHelper output)
{
    // Invented demo scenario: the rotor θ̇ = μ − sin θ turns for μ > 1 and rests at sin θ* = μ for μ < 1 (Adler 1946).
    // Its period is T = 2π/√(μ² − 1): 13.7 at μ = 1.1, 44.5 at μ = 1.01 (Strogatz, Nonlinear Dynamics and Chaos, 2nd
    // ed., §4.3); at μ = 0.9 it settles with rate √(1 − μ²) = 0.44, within about 10 time units.
    private const double Dt = 0.02;
    private const double Noise = 0.01;

    /// <summary>One record whose parameter steps through the pieces: each piece starts where the last one ended.</summary>
    private static RunResult Stitched(params (double Mu, int Revolutions, double Duration)[] pieces)
    {
        var time = new List<double>();
        var phase = new List<double>();
        // A run that starts at rest starts at its rest point θ* = asin μ.
        double? start = Math.Asin(Math.Min(pieces[0].Mu, 1.0));
        for (var k = 0; k < pieces.Length; k++)
        {
            var (mu, revolutions, duration) = pieces[k];
            var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions
            {
                Mu = mu,
                Revolutions = revolutions,
                MaxDuration = duration,
                SamplingInterval = Dt,
                MeasurementNoise = Noise,
                Seed = 11 + k,
                InitialPhase = start,
            });
            var offset = time.Count > 0 ? time[^1] + Dt : 0;
            var skip = time.Count > 0 ? 1 : 0;
            time.AddRange(run.Time.Skip(skip).Select(t => t + offset - (skip * Dt)));
            phase.AddRange(run.Phase.Skip(skip));
            start = run.TruePhase[^1];
        }

        var recording = new PhaseRecording("stitched.csv", [.. time], [.. phase], [0]);
        return RunAnalyzer.Analyze(Trajectory.FromRecording(recording), pieces[0].Mu, recording.File);
    }

    private void Show(RunResult run) =>
        output.WriteLine($"turns {run.Turns:F2}, period {run.Period?.Measured}, duration {run.Duration:F1}, flags {string.Join(",", run.Flags)}");

    [Fact]
    public void RunThatTurnsThenRests_IsFlaggedMixedBehaviourWithAWarning()
    {
        // Eight turns at μ = 1.1 (about 110 time units), then μ drops to 0.9 and the rotor stalls for 80.
        var run = Stitched((1.1, 8, 1e4), (0.9, 100, 80));
        Show(run);

        Assert.Contains(RunFlag.MixedBehaviour, run.Flags);
        var warning = Assert.Single(run.Diagnostics, d => d.Code == "mixed-behaviour");
        Assert.Equal(Severity.Warning, warning.Severity);
        Assert.Equal("stitched.csv", warning.File);
    }

    [Fact]
    public void RunThatRestsThenTurns_IsFlaggedMixedBehaviour()
    {
        // The reverse (RunFlag.MixedBehaviour: "or the reverse"): at rest at μ = 0.9 for 80, then eight turns at 1.1.
        var run = Stitched((0.9, 100, 80), (1.1, 8, 1e4));
        Show(run);

        Assert.Contains(RunFlag.MixedBehaviour, run.Flags);
        Assert.Single(run.Diagnostics, d => d.Code == "mixed-behaviour");
    }

    [Fact]
    public void RunThatTurnsThroughout_IsNotFlagged()
    {
        // Control: the same record length, turning at μ = 1.1 all the way.
        var run = Stitched((1.1, 14, 1e4));
        Show(run);

        Assert.True(run.Duration > 180);
        Assert.DoesNotContain(RunFlag.MixedBehaviour, run.Flags);
        Assert.DoesNotContain(run.Diagnostics, d => d.Code == "mixed-behaviour");
    }

    [Fact]
    public void RunThatSlowsDownButKeepsTurning_IsNotFlagged()
    {
        // Eight turns at μ = 1.1, then three slow turns at μ = 1.01 (T = 44.5): the last quarter still advances a turn.
        var run = Stitched((1.1, 8, 1e4), (1.01, 3, 1e4));
        Show(run);

        Assert.DoesNotContain(RunFlag.MixedBehaviour, run.Flags);
    }

    [Fact]
    public void RunEndingInsideOneSlowBottleneckPassage_IsNotFlagged()
    {
        // Close to onset (μ = 1.0005, T = 199) the phase spends most of each period near θ = π/2: a record of a little
        // over two periods that ends as the phase leaves the bottleneck advances less than a tenth of a turn in its last
        // quarter, as a stalled run would, but that quarter is shorter than two periods: a passage, not a rest.
        var full = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions
        {
            Mu = 1.0005,
            Revolutions = 4,
            SamplingInterval = Dt,
            MeasurementNoise = Noise,
            Seed = 3,
            InitialPhase = (Math.PI / 2) + 0.35,
        });
        var exit = (Math.PI / 2) + 0.31 + (4 * Math.PI);
        var n = Array.FindIndex(full.TruePhase, p => p >= exit) + 1;
        var recording = new PhaseRecording("passage.csv", full.Time[..n], full.Phase[..n], [0]);
        var quarterStart = Array.FindIndex(full.Time, t => t >= 0.75 * full.Time[n - 1]);
        Assert.True(full.TruePhase[n - 1] - full.TruePhase[quarterStart] < 0.1 * 2 * Math.PI, "precondition: the last quarter advances less than 0.1 turn");

        var run = RunAnalyzer.Analyze(Trajectory.FromRecording(recording), 1.0005, recording.File);
        Show(run);

        Assert.True(run.IsTurning);
        Assert.DoesNotContain(RunFlag.MixedBehaviour, run.Flags);
    }
}
