using NormalFormFit.Bottleneck;
using NormalFormFit.Field;

namespace NormalFormFit.Tests.Bottleneck;

public class BottleneckLocatorTests
{
    // Samples of an exact field θ̇ = f(θ) along several revolutions, uniformly in phase, weight = time covered.
    private static (double[] Phase, double[] Speed, double[] Weight, int[] Rev, int Count) Samples(Func<double, double> f, int revolutions, int perRev)
    {
        var n = revolutions * perRev;
        var ph = new double[n];
        var v = new double[n];
        var w = new double[n];
        for (var i = 0; i < n; i++)
        {
            ph[i] = 0.3 + (2 * Math.PI * i / perRev);
            v[i] = f(ph[i]);
            w[i] = 2 * Math.PI / perRev / v[i];
        }

        var labels = RevolutionBlocks.Label(ph, 0.3, out var count);
        return (ph, v, w, labels, count);
    }

    [Fact]
    public void Locate_OnExactParabolaField_RecoversAAndBAndPhase()
    {
        // θ̇ = a + b·(θ − θ*)² near θ* (wrapped), exact: the weighted quadratic fit reproduces it to rounding.
        const double a = 0.02, b = 0.7, star = 2.0;
        double F(double th) => a + (b * Math.Pow(RevolutionBlocks.WrapSigned(th - star), 2));
        var (ph, v, w, rev, count) = Samples(F, 6, 4000);
        var field = PhaseFieldEstimator.Estimate(ph, v, w, rev, count, new FieldOptions { Bins = 128, BootstrapReplicates = 0 });
        var fit = BottleneckLocator.Locate(ph, v, w, rev, count, field);
        Assert.NotNull(fit);
        Assert.Equal(a, fit.A.Value, 9);
        Assert.Equal(b, fit.B.Value, 8);
        Assert.Equal(star, fit.Phase.Value, 8);
    }

    [Fact]
    public void Locate_OnRotorField_KeepsQuarticBiasBelowOnePercentOfA()
    {
        // Rotor θ̇ = μ − sin θ: a = μ − 1, b = ½ at θ* = π/2 (Taylor expansion, common practice, no source).
        // The quartic term −x⁴/24 biases a fixed-window fit; with the half-window w = 1.5√(a/b) ≈ 0.47 the bias is at
        // most (3/35)·w⁴/24 ≈ 1.8·10⁻⁴ ≈ 0.4% of a = 0.05 (least-squares projection of x⁴ on {1, x²} with uniform
        // weights; time weights concentrate on the centre and lower it). Bound 1%.
        const double mu = 1.05;
        var (ph, v, w, rev, count) = Samples(th => mu - Math.Sin(th), 5, 20000);
        var field = PhaseFieldEstimator.Estimate(ph, v, w, rev, count, new FieldOptions { Bins = 128, BootstrapReplicates = 0 });
        var fit = BottleneckLocator.Locate(ph, v, w, rev, count, field)!;
        Assert.InRange(fit.A.Value / 0.05, 0.99, 1.01);
        Assert.InRange(fit.B.Value, 0.47, 0.5);
        Assert.Equal(Math.PI / 2, fit.Phase.Value, 6);
    }

    [Fact]
    public void PassageTime_IsPiOverRootAB()
    {
        // ∫dx/(a + bx²) over the line = π/√(ab) (standard integral; checked numerically in PassageTimeTests).
        var fit = new BottleneckFit(new Estimate(1, 0), new Estimate(0.02, 0.001), new Estimate(0.5, 0.01), 0.3, 100, 0, 0);
        Assert.Equal(Math.PI / Math.Sqrt(0.01), fit.PassageTime.Value, 12);
        Assert.Equal(Math.PI / Math.Sqrt(0.01) * 0.5 * Math.Sqrt(Math.Pow(0.05, 2) + Math.Pow(0.02, 2)), fit.PassageTime.StandardError, 12);
    }
}
