using MathNet.Numerics;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Simulation;

/// <summary>
/// The analysis predicts the period of a run from its bottleneck θ̇ ≈ a + b(θ − θ*)² by the passage time over the
/// whole line, T = ∫dx/(a + bx²) = π/√(ab). These checks verify that formula and its link to the closed-form periods.
/// </summary>
public class PassageTimeTests
{
    // Integration by MathNet.Numerics 5.0.0
    // Integrate.GaussKronrod(f, begin, end, targetRelativeError: 1e-12, maximumDepth: 40, order: 61).
    // The reported error is at that relative level; 1e-9 leaves three decades for round-off in the transformed
    // integrand and for an optimistic error estimate, and is still far below any difference a wrong formula makes
    // (a factor 2, or a wrong power of a or b, changes the value by tens of percent or more at these a, b).
    private const double QuadratureTolerance = 1e-9;

    [Theory]
    [InlineData(1.0, 1.0)]
    [InlineData(0.01, 0.5)]
    [InlineData(1e-4, 2.0)]
    [InlineData(3.0, 0.2)]
    public void PassageTime_OverQuadraticBottleneck_MatchesPiOverRootAB(double a, double b)
    {
        // Reference: ∫_{−∞}^{∞} dx/(a + bx²) = π/√(ab) for a, b > 0, from the antiderivative
        // arctan(x√(b/a))/√(ab) (standard integral, from memory; tabulated in Gradshteyn & Ryzhik §2.17,
        // entry number not checked).
        var expected = Math.PI / Math.Sqrt(a * b);

        // x = s/(1 − s²) maps (−1, 1) onto the line; dx = (1 + s²)/(1 − s²)² ds, so the integrand becomes
        // (1 + s²)/(a(1 − s²)² + bs²), finite (2/b) at s = ±1. Split at the peak s = 0.
        double Integrand(double s) => (1.0 + (s * s)) / ((a * Math.Pow(1.0 - (s * s), 2)) + (b * s * s));
        var numeric = Quad(Integrand, -1.0, 0.0) + Quad(Integrand, 0.0, 1.0);

        Assert.Equal(1.0, numeric / expected, QuadratureTolerance);
    }

    [Theory]
    [InlineData(1.5)]
    [InlineData(1.01)]
    [InlineData(4.0)]
    public void Period_OfRotorByQuadrature_MatchesAdlerClosedForm(double mu)
    {
        // Reference: Adler (1946), T = 2π/√(μ² − 1). Checked against T = ∮dθ/θ̇ computed with the MathNet call above.
        var model = BuiltInModels.Rotor;
        var numeric = Quad(theta => 1.0 / model.Velocity(theta, mu), -Math.PI, 0.0)
            + Quad(theta => 1.0 / model.Velocity(theta, mu), 0.0, Math.PI);

        Assert.Equal(1.0, numeric / model.ExactPeriod(mu)!.Value, QuadratureTolerance);
    }

    [Theory]
    [InlineData(0.5)]
    [InlineData(0.01)]
    [InlineData(9.0)]
    public void Period_OfThetaNeuronByQuadrature_MatchesErmentroutKopellClosedForm(double mu)
    {
        // Reference: Ermentrout & Kopell (1986), T = π/√μ; against ∮dθ/θ̇ with the MathNet call above.
        var model = BuiltInModels.ThetaNeuron;
        var numeric = Quad(theta => 1.0 / model.Velocity(theta, mu), -Math.PI, 0.0)
            + Quad(theta => 1.0 / model.Velocity(theta, mu), 0.0, Math.PI);

        Assert.Equal(1.0, numeric / model.ExactPeriod(mu)!.Value, QuadratureTolerance);
    }

    [Theory]
    [InlineData("rotor", 1.0, Math.PI / 2)]
    [InlineData("theta-neuron", 0.0, 0.0)]
    public void PassageTime_FromLocalNormalForm_TendsToExactPeriodAtOnset(string name, double onset, double bottleneck)
    {
        // Near a saddle-node on the circle the whole period is spent in the bottleneck, so π/√(ab) with a, b from
        // the Taylor expansion of θ̇ at its minimum tends to the exact period (Adler 1946; Ermentrout & Kopell 1986).
        // The relative gap is first order in the distance ε to onset (rotor: √((μ + 1)/2) − 1 ≈ ε/4; theta neuron:
        // 1/√(1 − μ) − 1 ≈ ε/2), so we require it below ε and shrinking tenfold with ε.
        Assert.True(BuiltInModels.TryGet(name, out var model));
        var previousGap = double.NaN;
        foreach (var epsilon in new[] { 1e-2, 1e-3, 1e-4 })
        {
            var mu = onset + epsilon;
            const double d = 1e-3; // central differences: error O(d²) relative, about 1e-6
            var a = model.Velocity(bottleneck, mu);
            var b = (model.Velocity(bottleneck + d, mu) - (2.0 * a) + model.Velocity(bottleneck - d, mu)) / (2.0 * d * d);
            var gap = Math.Abs((Math.PI / Math.Sqrt(a * b) / model.ExactPeriod(mu)!.Value) - 1.0);

            Assert.True(gap < epsilon, $"gap {gap:G3} at ε = {epsilon:G3}");
            if (!double.IsNaN(previousGap))
            {
                Assert.InRange(previousGap / gap, 8.0, 12.0);
            }

            previousGap = gap;
        }
    }

    private static double Quad(Func<double, double> f, double begin, double end) =>
        Integrate.GaussKronrod(f, begin, end, targetRelativeError: 1e-12, maximumDepth: 40, order: 61);
}
