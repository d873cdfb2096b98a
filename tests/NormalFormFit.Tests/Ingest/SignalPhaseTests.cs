using NormalFormFit.Analysis;
using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

/// <summary>
/// A protophase from one signal (<see cref="SignalPhase"/>, asked for with <see cref="SignalEventOptions.Protophase"/>),
/// checked on the theta neuron θ̇ = (1 − cos θ) + (1 + cos θ) I (Ermentrout &amp; Kopell 1986, SIAM J. Appl. Math.
/// 46:233), whose solution for I &gt; 0 is tan(θ/2) = √I tan(√I t), period π/√I, recorded as the signal s = sin θ (rising through the bottleneck at θ = 0: a signal at an extremum there would
/// fold the embedded orbit back on itself at the bottleneck).
/// Near θ = 0 the field is θ̇ ≈ 2I + θ²/2, so ab = I and the bottleneck's passage time π/√(ab) is π/√I too; ab does not
/// change under a smooth change of phase (a → g a, b → b/g), so it can be checked in protophase units.
/// </summary>
public class SignalPhaseTests
{
    private const double Current = 0.01;
    private const double Step = 0.01;
    private const int Cycles = 40;

    private static readonly RunOptions WithProtophase = new() { SignalEvents = new SignalEventOptions { Protophase = true } };

    /// <summary>s = sin θ(t) = 2u/(1 + u²), u = √I tan x, x = √I t, written without the poles of tan: 2√I sin x cos x/(cos²x + I sin²x).</summary>
    private static (double[] Time, double[] Values) ThetaNeuron(double noise, int seed, double current = Current)
    {
        var period = Math.PI / Math.Sqrt(current);
        var n = (int)(Cycles * period / Step);
        var random = new Random(seed);
        var t = new double[n];
        var s = new double[n];
        for (var k = 0; k < n; k++)
        {
            t[k] = k * Step;
            var x = Math.Sqrt(current) * (t[k] + (0.3 * period));
            var (sin, cos) = Math.SinCos(x);
            s[k] = 2 * Math.Sqrt(current) * sin * cos / ((cos * cos) + (current * sin * sin));
            s[k] += noise * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
        }

        return (t, s);
    }

    private static Loaded<RunResult> Analyse(double[] t, double[] s, double current = Current) =>
        RecordingAnalyzer.Analyze(new SignalRecording("theta.csv", t, s, [0]) { SignalColumnName = "signal", TimeUnit = "s" }, current, "theta.csv", null, WithProtophase, []);

    [Fact]
    public void ThetaNeuronSignal_GivesAProtophaseWhosePeriodAndBottleneckPassageAreπOverRootI()
    {
        var (t, s) = ThetaNeuron(0.01, 7);
        var run = Analyse(t, s).Value!;
        var expected = Math.PI / Math.Sqrt(Current);

        Assert.Equal(RecordingKind.Signal, run.InputKind);
        Assert.NotNull(run.SignalOrbit);
        Assert.Equal(0, run.SignalOrbit!.CyclesLeftOut);
        Assert.InRange(run.SignalOrbit.Cycles, Cycles - 2, Cycles);

        // Period from the protophase (crossings on the fast side): the exact π/√I within 0.5 %.
        Assert.InRange(run.Period!.Measured.Value / expected, 0.995, 1.005);

        // Bottleneck in protophase units: π/√(ab) is the passage time of the normal form, π/√I here (ab = I(1 − I) to
        // leading order; the fit window's bias and the protophase's curvature are O(a): 5 % allowed, 1.3 % measured).
        Assert.NotNull(run.Bottleneck);
        Assert.InRange(run.Period.FromBottleneck.Value / expected, 0.95, 1.05);
    }

    [Fact]
    public void TheMinimumSpeed_InProtophaseUnits_IsProportionalToTheDistanceFromOnset()
    {
        // a = 2I in θ (the field's minimum, Ermentrout & Kopell 1986), times the protophase's scale g at the bottleneck,
        // which does not depend on I to leading order: a/I is the same for every current, so a → 0 at the onset I = 0.
        // Measured: a/I = 2.83, 2.81, 2.81, 2.83 (noise 0.01 on a signal of amplitude 1).
        double[] currents = [0.0025, 0.005, 0.0075, 0.01];
        var ratios = currents.Select((i, k) =>
        {
            var (t, s) = ThetaNeuron(0.01, 20 + k, i);
            var run = Analyse(t, s, i).Value!;
            return run.Bottleneck!.A.Value / i;
        }).ToArray();
        Assert.InRange(ratios.Max() / ratios.Min(), 1, 1.05);
    }

    [Fact]
    public void ACycleWithABackwardLoop_IsFlaggedAndLeftOut_AndTheOthersAreKept()
    {
        var (t, s) = ThetaNeuron(0.01, 8);
        var period = Math.PI / Math.Sqrt(Current);

        // In the 20th cycle, at the bottleneck (θ = 0, s = 0; reached at t = 0.7 T + k T with the offset of 0.3 T), a
        // dip to −0.8 and back: the orbit runs back along the stretch it has just come up (s from −0.8 to 0) and
        // straight out again, so the protophase runs backwards by far more than its tolerance. No event: the dip is downward.
        var centre = (19 * period) + (0.7 * period);
        var half = 0.05 * period;
        for (var k = 0; k < t.Length; k++)
        {
            var u = (t[k] - centre) / half;
            if (Math.Abs(u) < 1)
            {
                s[k] = Math.Min(s[k], -0.8 * Math.Cos(Math.PI / 2 * u));
            }
        }

        var result = Analyse(t, s);
        var run = result.Value!;
        Assert.Equal(1, run.SignalOrbit!.CyclesLeftOut);
        var (start, end) = Assert.Single(run.SignalOrbit.LeftOutTimes);
        Assert.InRange(centre, start, end);
        Assert.Contains(run.Diagnostics, d => d.Code == "signal-cycles-left-out");

        // The rest still give the period.
        Assert.InRange(run.Period!.Measured.Value / period, 0.995, 1.005);
    }

    [Fact]
    public void WithoutTheOption_ASignalKeepsItsPeriodsOnly()
    {
        var (t, s) = ThetaNeuron(0.01, 9);
        var run = RecordingAnalyzer.Analyze(new SignalRecording("theta.csv", t, s, [0]), Current, "theta.csv", null, RunOptions.Default, []).Value!;
        Assert.Null(run.SignalOrbit);
        Assert.Null(run.Bottleneck);
        Assert.Contains(RunFlag.PeriodsOnly, run.Flags);
    }
}
