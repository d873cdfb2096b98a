using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Analysis;

public class InvarianceTests
{
    private static readonly SimulatedRun Run = Simulator.Run(BuiltInModels.Rotor,
        new SimulationOptions { Mu = 1.05, Revolutions = 6, SamplingInterval = 0.02, MeasurementNoise = 0.01, Seed = 3 });

    private static RunResult Analyze(double[] t, double[] ph) =>
        RunAnalyzer.Analyze(Trajectory.FromRecording(new PhaseRecording("r", t, ph, [0])), 1.05, "r");

    [Fact]
    public void Results_DoNotChange_WhenTimeIsShifted()
    {
        // Time-translation invariance of the dynamics (common practice, no source). A shift of 1000 time units
        // changes floating-point rounding of t only (relative 1e-16 × 1000 / spacing 0.02 ≈ 5e-12 in Δt): 1e-6 bound.
        var baseline = Analyze(Run.Time, Run.Phase);
        var shifted = Analyze(Run.Time.Select(x => x + 1000).ToArray(), Run.Phase);
        Assert.Equal(baseline.Bottleneck!.A.Value, shifted.Bottleneck!.A.Value, 6);
        Assert.Equal(baseline.Bottleneck.B.Value, shifted.Bottleneck.B.Value, 5);
        Assert.Equal(baseline.Period!.Measured.Value, shifted.Period!.Measured.Value, 6);
    }

    [Fact]
    public void Results_DoNotChange_WhenWholeTurnsAreAddedToThePhase()
    {
        // Phase is defined modulo 2π (common practice, no source); adding 2πk to every sample changes rounding only.
        var baseline = Analyze(Run.Time, Run.Phase);
        var turned = Analyze(Run.Time, Run.Phase.Select(x => x + (2 * Math.PI * 7)).ToArray());
        Assert.Equal(baseline.Bottleneck!.A.Value, turned.Bottleneck!.A.Value, 7);
        Assert.Equal(baseline.Bottleneck.Phase.Value, turned.Bottleneck.Phase.Value, 6);
        Assert.Equal(baseline.Period!.Measured.Value, turned.Period!.Measured.Value, 7);
    }

    [Fact]
    public void RotorRun_FieldPeriod_MatchesMeasuredPeriodWithinErrors()
    {
        // ∮dθ/θ̇ of the reconstructed field equals the period (definition) — a check on the field.
        var r = Analyze(Run.Time, Run.Phase);
        var diff = Math.Abs(r.Period!.FromField.Value - r.Period.Measured.Value);
        Assert.True(diff < 3 * Math.Sqrt(Math.Pow(r.Period.FromField.StandardError, 2) + Math.Pow(r.Period.Measured.StandardError, 2)) + (0.005 * r.Period.Measured.Value));
        Assert.DoesNotContain(RunFlag.FieldPeriodMismatch, r.Flags);
    }

    [Fact]
    public void RunBelowOnset_IsReportedAsNotTurning()
    {
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 0.95, Revolutions = 3, SamplingInterval = 0.05, MaxDuration = 200, Seed = 2 });
        var r = Analyze(sim.Time, sim.Phase);
        Assert.False(r.IsTurning);
        Assert.Null(r.Period);
    }
}
