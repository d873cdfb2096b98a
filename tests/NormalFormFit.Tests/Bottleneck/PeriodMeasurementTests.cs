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
        var m = PeriodMeasurement.Measure(t, ph, [0], 4.0);
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
        var withGap = PeriodMeasurement.Measure(t, ph, [0, 5000], 1.0);
        var whole = PeriodMeasurement.Measure(t, ph, [0], 1.0);
        Assert.True(withGap.Revolutions < whole.Revolutions);
        Assert.All(withGap.Periods, p => Assert.Equal(Math.PI, p, 9));
    }
}
