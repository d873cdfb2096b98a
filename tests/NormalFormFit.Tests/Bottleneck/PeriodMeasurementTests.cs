using NormalFormFit.Bottleneck;

namespace NormalFormFit.Tests.Bottleneck;

public class PeriodMeasurementTests
{
    [Fact]
    public void Measure_OnUniformRotation_GivesTwoPiOverOmegaForEveryRevolution()
    {
        // θ = ωt: every passage through θref + 2πk is 2π/ω apart (definition of the period, common practice, no source).
        const double omega = 1.7;
        var t = Enumerable.Range(0, 20001).Select(i => i * 0.001).ToArray();
        var ph = t.Select(x => (omega * x) + 0.2).ToArray();
        var m = PeriodMeasurement.Measure(t, ph, [], [0], 4.0);
        Assert.Equal(4, m.Revolutions); // 34 rad from 0.2: passages at 4 + 2πk, k = 0…4
        Assert.All(m.Periods, p => Assert.Equal(2 * Math.PI / omega, p, 9));
        Assert.Equal(0, m.Mean.StandardError, 9);
    }

    [Fact]
    public void Measure_DoesNotTimeAcrossAGap()
    {
        const double omega = 2.0;
        var t = Enumerable.Range(0, 10001).Select(i => i * 0.002).ToArray();
        var ph = t.Select(x => omega * x).ToArray();
        var withGap = PeriodMeasurement.Measure(t, ph, [], [0, 5000], 1.0);
        var whole = PeriodMeasurement.Measure(t, ph, [], [0], 1.0);
        Assert.True(withGap.Revolutions < whole.Revolutions);
        Assert.All(withGap.Periods, p => Assert.Equal(Math.PI, p, 9));
    }

    // θ(t) = ωt + ε sin ωt advances by exactly 2π every 2π/ω (θ(t + 2π/ω) = θ(t) + 2π), with a speed
    // θ̇ = ω(1 + ε cos ωt) that varies by a factor of nine at ε = 0.8: a chord across a gap misplaces a passage.
    private const double Omega = 1.3, Epsilon = 0.8, Step = 0.01;

    private static (double[] T, double[] Phase, double[] Speed) Rotation(Func<int, bool> keep)
    {
        var idx = Enumerable.Range(0, 5001).Where(keep).ToArray();
        var t = idx.Select(i => i * Step).ToArray();
        return (t, t.Select(x => (Omega * x) + (Epsilon * Math.Sin(Omega * x))).ToArray(), t.Select(x => Omega * (1 + (Epsilon * Math.Cos(Omega * x)))).ToArray());
    }

    private static int SampleBefore(double phase) => (int)Math.Floor(Enumerable.Range(0, 5001).First(i => (Omega * i * Step) + (Epsilon * Math.Sin(Omega * i * Step)) >= phase) - 1.0);

    [Fact]
    public void Measure_AcrossABridgedGap_TimesThePassageOnTheHermiteInterpolant_AndKeepsEveryRevolution()
    {
        // Twelve samples missing around the passage through 1 + 2π·3 (phase advance about 0.5 rad across the gap).
        var before = SampleBefore(1.0 + (6 * Math.PI));
        var (t, ph, v) = Rotation(i => i <= before - 5 || i > before + 7);
        var full = PeriodMeasurement.Measure(Rotation(_ => true).T, Rotation(_ => true).Phase, [], [0], 1.0);
        var m = PeriodMeasurement.Measure(t, ph, v, [0], 1.0);
        Assert.Equal(full.Revolutions, m.Revolutions);
        Assert.Equal(2 * Math.PI / Omega, m.Mean.Value, 6);

        // The chord across the same gap misplaces the passage by far more than the Hermite interpolant does.
        var chord = PeriodMeasurement.Measure(t, ph, [], [0], 1.0);
        var hermiteError = m.Periods.Max(p => Math.Abs(p - (2 * Math.PI / Omega)));
        var chordError = chord.Periods.Max(p => Math.Abs(p - (2 * Math.PI / Omega)));
        Assert.True(hermiteError < 0.01 * chordError, $"Hermite {hermiteError:G3}, chord {chordError:G3}");
    }

    [Fact]
    public void Measure_LeavesOutAPassageInsideAWideGap_ButCountsTheRevolutionsAcrossIt()
    {
        // Sixty samples missing (about 1.3 rad or more of phase): the passage is not timed, the two periods that
        // share it are lost, but the mean still spans every revolution.
        var before = SampleBefore(1.0 + (6 * Math.PI));
        var (t, ph, v) = Rotation(i => i <= before - 30 || i > before + 30);
        var full = PeriodMeasurement.Measure(Rotation(_ => true).T, Rotation(_ => true).Phase, [], [0], 1.0);
        var m = PeriodMeasurement.Measure(t, ph, v, [0], 1.0);
        Assert.Equal(full.CrossingTimes.Length - 1, m.CrossingTimes.Length);
        Assert.Equal(full.Periods.Length - 2, m.Periods.Length);
        Assert.Equal(full.Revolutions, m.Revolutions);
        Assert.Equal(2 * Math.PI / Omega, m.Mean.Value, 6);
    }
}
