using System.Globalization;
using System.Text;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Cli;

namespace NormalFormFit.Tests.Ingest;

/// <summary>
/// Missing samples, gaps, wrong positions and columns that are no phase: what the reader and the unwrapping do with
/// them. Rules are nffit's own (docs/input-formats.md), checked against a known truth.
/// </summary>
public class RecordingSanityTests
{
    private static readonly CultureInfo Ic = CultureInfo.InvariantCulture;

    // θ(t) = ωt + 0.8 sin ωt: a phase that slows down and speeds up once a turn (period 2π/ω = 1).
    private static double Truth(double t) => (2 * Math.PI * t) + (0.8 * Math.Sin(2 * Math.PI * t));

    private static PhaseRecording Wrapped(double[] t) =>
        new("run.csv", t, [.. t.Select(x => Math.IEEERemainder(Truth(x), 2 * Math.PI))], [0]);

    private static double[] TimesWithout(double from, double to) =>
        [.. Enumerable.Range(0, 500).Select(i => i * 0.01).Where(t => t < from || t > to)];

    [Theory]
    [InlineData(0.10)]
    [InlineData(0.30)]
    [InlineData(0.45)]
    public void AGapShorterThanHalfTheRevolutionTime_IsBridged_WithTheRightTurnCount(double gap)
    {
        // Note the gap covers the fast part of the turn for gap ≥ 0.3: the phase advances by more than π across it.
        var t = TimesWithout(2.2, 2.2 + gap);
        var trajectory = Trajectory.FromRecording(Wrapped(t));
        Assert.Equal([0], trajectory.SegmentStarts);
        Assert.Equal(1, trajectory.BridgedGaps);
        for (var i = 0; i < t.Length; i++)
        {
            Assert.Equal(Truth(t[i]) - Truth(t[0]), trajectory.Phase[i] - trajectory.Phase[0], 9);
        }
    }

    [Theory]
    [InlineData(0.05, 0.3)]
    [InlineData(0.15, 0.45)]
    public void AGapBeforeTheFirstWholeTurn_IsBridgedForward(double from, double gap)
    {
        // No earlier revolution to copy: the phase moves forward by less than a turn in less than half a turn's time.
        var t = TimesWithout(from, from + gap);
        var trajectory = Trajectory.FromRecording(Wrapped(t));
        Assert.Equal([0], trajectory.SegmentStarts);
        Assert.Equal(Truth(t[^1]) - Truth(t[0]), trajectory.Phase[^1] - trajectory.Phase[0], 9);
    }

    [Fact]
    public void AGapLongerThanHalfTheRevolutionTime_SplitsTheSegment()
    {
        var t = TimesWithout(2.2, 2.85);
        var trajectory = Trajectory.FromRecording(Wrapped(t));
        Assert.Equal(2, trajectory.SegmentStarts.Length);
        Assert.Equal(1, trajectory.SplitGaps);
    }

    [Fact]
    public void ARunAtRest_IsFollowedAcrossAnyGap()
    {
        double[] t = [.. Enumerable.Range(0, 300).Select(i => i * 0.01).Where(x => x < 1 || x > 2.5)];
        var rec = new PhaseRecording("rest.csv", t, [.. t.Select(x => 1.2 + (0.001 * Math.Sin(x)))], [0]);
        var trajectory = Trajectory.FromRecording(rec);
        Assert.Equal([0], trajectory.SegmentStarts);
        Assert.True(trajectory.Phase.Max() - trajectory.Phase.Min() < 0.01);
    }

    [Fact]
    public void AnIsolatedJump_IsRejected_NotUnwrappedIntoATurn()
    {
        double[] t = [.. Enumerable.Range(0, 500).Select(i => i * 0.01)];
        var rec = Wrapped(t);
        var phase = (double[])rec.Phase.Clone();
        phase[200] = Math.IEEERemainder(phase[200] + 3.0, 2 * Math.PI);
        phase[321] = Math.IEEERemainder(phase[321] - 2.5, 2 * Math.PI);
        var (clean, removed) = PhaseChecks.RejectIsolatedJumps(rec with { Phase = phase });
        Assert.Equal(2, removed);
        Assert.DoesNotContain(2.0, clean.Time);
        Assert.DoesNotContain(3.21, clean.Time);
        var trajectory = Trajectory.FromRecording(clean);
        Assert.Equal(Truth(4.99) - Truth(0), trajectory.Phase[^1] - trajectory.Phase[0], 9);
    }

    [Fact]
    public void ASlip_IsKept()
    {
        // A quick extra turn over ten samples that does not come back: a slip, part of the motion.
        double[] t = [.. Enumerable.Range(0, 400).Select(i => i * 0.01)];
        double Slip(double x) => (0.5 * x) + (2 * Math.PI * Math.Clamp((x - 2) / 0.1, 0, 1));
        var rec = new PhaseRecording("slip.csv", t, [.. t.Select(x => Math.IEEERemainder(Slip(x), 2 * Math.PI))], [0]);
        var (_, removed) = PhaseChecks.RejectIsolatedJumps(rec);
        Assert.Equal(0, removed);
    }

    [Fact]
    public void AVoltageInMillivolts_ReadAsAPhase_IsRefusedNamingTheColumn()
    {
        double[] t = [.. Enumerable.Range(0, 400).Select(i => i * 0.001)];
        var rec = new PhaseRecording("cell.csv", t, [.. t.Select(x => -65 + (45 * Math.Max(0, Math.Sin(40 * x))))], [0]) { PhaseColumnName = "V_m" };
        var e = PhaseChecks.NotAPhase(rec);
        Assert.NotNull(e);
        Assert.Contains("the column 'V_m' as the phase does not behave like one", e.Message, StringComparison.Ordinal);
        Assert.Contains("a signal such as a voltage is not a phase", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void StepsOfManyRadiansBetweenNeighbours_AreRefused()
    {
        var rng = new Random(5);
        double[] t = [.. Enumerable.Range(0, 400).Select(i => i * 0.01)];
        var rec = new PhaseRecording("noise.csv", t, [.. t.Select(_ => (rng.NextDouble() * 2 * Math.PI) - Math.PI)], [0]);
        Assert.Contains("neighbouring samples differ by", PhaseChecks.NotAPhase(rec)!.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AWrappedOrUnwrappedPhase_IsAccepted()
    {
        double[] t = [.. Enumerable.Range(0, 500).Select(i => i * 0.01)];
        Assert.Null(PhaseChecks.NotAPhase(Wrapped(t)));
        Assert.Null(PhaseChecks.NotAPhase(new PhaseRecording("u.csv", t, [.. t.Select(x => 1000 + Truth(x))], [0]) { Unwrapped = true }));
        Assert.Null(PhaseChecks.NotAPhase(new PhaseRecording("d.csv", t, [.. t.Select(x => Math.IEEERemainder(Truth(x), 2 * Math.PI) + Math.PI)], [0])));
    }

    [Fact]
    public void AVoltageGivenAsThePhaseColumn_ExitsWithCodeTwo()
    {
        using var dir = CliTestHost.NewFolder();
        var sb = new StringBuilder("t,V_m\n");
        for (var i = 0; i < 400; i++)
        {
            sb.Append(Ic, $"{i * 0.001},{-65 + (45 * Math.Max(0, Math.Sin(40 * i * 0.001)))}\n");
        }

        File.WriteAllText(dir.File("cell.csv"), sb.ToString());
        File.WriteAllText(dir.File("m.csv"), "file,I_app [pA]\ncell.csv,1\n");
        var (code, _, err) = CliTestHost.Run("analyze", dir.File("m.csv"), "--phase-column", "V_m");
        Assert.Equal(2, code);
        Assert.Contains("the column 'V_m' as the phase does not behave like one", err, StringComparison.Ordinal);
    }

    [Fact]
    public void RobustEllipseFit_IgnoresWrongPositions_AndRecoversTheExactEllipse()
    {
        // Direct least squares is exact for points on an ellipse (Fitzgibbon, Pilu & Fisher 1999, §4); with 5 % of the
        // points moved far off it, Tukey's biweight gives them weight zero and the fit to the rest is exact again.
        var rng = new Random(8);
        var x = new double[400];
        var y = new double[400];
        for (var i = 0; i < x.Length; i++)
        {
            var s = 2 * Math.PI * i / x.Length;
            var (u, v) = (120 * Math.Cos(s), 70 * Math.Sin(s));
            var (st, ct) = Math.SinCos(0.4);
            (x[i], y[i]) = (300 + (ct * u) - (st * v), 200 + (st * u) + (ct * v));
            if (i % 20 == 7)
            {
                (x[i], y[i]) = (300 + (400 * (rng.NextDouble() - 0.5)), 200 + (400 * (rng.NextDouble() - 0.5)));
            }
        }

        var plain = EllipseFit.Fit(x, y, []);
        var robust = RobustEllipseFit.Fit(x, y, [], out _)!;
        Assert.True(Math.Abs(plain!.SemiMajor - 120) > 1, "the plain fit is pulled off");
        Assert.Equal(300, robust.CentreX, 6);
        Assert.Equal(200, robust.CentreY, 6);
        Assert.Equal(120, robust.SemiMajor, 6);
        Assert.Equal(70, robust.SemiMinor, 6);
        Assert.Equal(0.4, robust.Tilt, 8);
    }

    [Fact]
    public void WrongPositions_AreDroppedOffTheOrbit_AndCounted()
    {
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.1, Revolutions = 5, SamplingInterval = 0.05, Seed = 2 });
        var track = CameraView.Project(sim, 1.0, new CameraOptions { Seed = 3, DropFraction = 0 });
        var x = (double[])track.X.Clone();
        var y = (double[])track.Y.Clone();
        for (var i = 50; i < x.Length; i += 97)
        {
            x[i] += 150;
            y[i] -= 90;
        }

        var wrong = Enumerable.Range(0, x.Length).Count(i => i >= 50 && (i - 50) % 97 == 0);
        var rec = new PositionRecording("cam.csv", track.Time, x, y, [0], YDown: true);
        var (phase, orbit, _) = OrbitPhase.FromPositions(rec);
        // A moved point may by chance land near the orbit again (then it is an ordinary sample, or a phase jump later).
        Assert.InRange(phase!.Dropped.OffOrbit, wrong - 2, wrong);
        Assert.True(orbit!.IsEllipse);
        Assert.Equal(200, orbit.Ellipse.SemiMajor, 0);
    }

    [Fact]
    public void PositionsThatDoNotWind_AreRefusedWithExitCodeTwo()
    {
        using var dir = CliTestHost.NewFolder();
        var sb = new StringBuilder("t,x,y\n");
        for (var i = 0; i < 300; i++)
        {
            var s = 0.6 * Math.Sin(i * 0.05);     // swings over a third of a circle, back and forth
            sb.Append(Ic, $"{i * 0.05},{100 * Math.Cos(s)},{100 * Math.Sin(s)}\n");
        }

        File.WriteAllText(dir.File("swing.csv"), sb.ToString());
        File.WriteAllText(dir.File("m.csv"), "file,param\nswing.csv,1\n");
        var (code, _, err) = CliTestHost.Run("analyze", dir.File("m.csv"));
        Assert.Equal(2, code);
        Assert.Contains("the positions do not wind round an orbit", err, StringComparison.Ordinal);
    }

    [Fact]
    public void RunsInDifferentTimeUnits_AreConvertedToTheFirstRunsUnit()
    {
        using var files = new RecordingFiles();
        double[] mus = [1.05, 1.1, 1.2];
        for (var k = 0; k < mus.Length; k++)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = mus[k], Revolutions = 5, SamplingInterval = 0.02, Seed = 5 + k });
            var ms = k == 1;
            files.AddRun($"r{k}.csv", mus[k], ms ? "time_ms,theta" : "time_s,theta", [.. sim.Time.Select(t => ms ? 1000 * t : t)], sim.Phase);
        }

        var set = ManifestAnalyzer.AnalyzeRuns(files.WriteManifest(), new AnalyzeOptions { Parallelism = 1 });
        Assert.Equal("s", set.Value!.TimeUnit);
        Assert.Contains(set.Diagnostics, d => d.Code == "time-units-converted");
        var period = set.Value.Runs[1].Period!.Measured.Value;
        Assert.Equal(2 * Math.PI / Math.Sqrt((1.1 * 1.1) - 1), period, 1);   // T = 2π/√(μ² − 1) for θ̇ = μ − sin θ (Strogatz 1994, §4.3)
    }

    [Fact]
    public void RunsWhereSomeNameATimeUnitAndOthersDoNot_AreRefused()
    {
        using var files = new RecordingFiles();
        for (var k = 0; k < 3; k++)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.1 + (0.1 * k), Revolutions = 3, SamplingInterval = 0.05, Seed = 5 + k });
            files.AddRun($"r{k}.csv", 1.1 + (0.1 * k), k == 2 ? "t,theta" : "time_s,theta", sim.Time, sim.Phase);
        }

        var set = ManifestAnalyzer.AnalyzeRuns(files.WriteManifest());
        var e = Assert.Single(set.Diagnostics);
        Assert.Equal("mixed-time-units", e.Code);
        Assert.Contains("does not name a unit", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AMissingRunFile_AmongRunsWithTimeUnits_IsReportedAsMissing_NotAsAMixOfUnits()
    {
        using var files = new RecordingFiles();
        for (var k = 0; k < 2; k++)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.1 + (0.1 * k), Revolutions = 3, SamplingInterval = 0.05, Seed = 5 + k });
            files.AddRun($"r{k}.csv", 1.1 + (0.1 * k), "time_s,theta", sim.Time, sim.Phase);
        }

        var manifest = files.WriteManifest();
        File.AppendAllText(manifest, "absent.csv,1.5\n");
        var set = ManifestAnalyzer.AnalyzeRuns(manifest);
        Assert.Contains(set.Diagnostics, d => d.Code == "missing-file");
        Assert.DoesNotContain(set.Diagnostics, d => d.Code == "mixed-time-units");
    }
}
