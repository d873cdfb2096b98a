using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Analysis;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Scaling;

/// <summary>The verdict on the kind of onset, on simulated runs of each kind.</summary>
public class OnsetKindTests(ITestOutputHelper output)
{
    private static readonly SimulationOptions Template = new() { Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01 };

    /// <summary>τc of θ̈ + 0.25θ̇ + sin θ = τ by shooting on the homoclinic connection with SciPy 1.10.1 solve_ivp (DOP853,
    /// rtol 1e-12), bisection to 1e-12: Reference/make_pendulum_onset.py → pendulum_onset.json.</summary>
    private static double PendulumOnset(double gamma)
    {
        using var doc = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "Reference", "pendulum_onset.json")));
        return doc.RootElement.GetProperty("cases").EnumerateArray()
            .First(c => Math.Abs(c.GetProperty("gamma").GetDouble() - gamma) < 1e-12).GetProperty("tau_c").GetDouble();
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void Verdict_OnRotorAndThetaNeuronRuns_IsSaddleNodeOnCircleAndRoutesApply(int seed)
    {
        // Rotor: μc = 1 (Adler 1946); theta neuron: μc = 0 (Ermentrout & Kopell 1986); both saddle-nodes on the circle.
        var rotor = SimulatedSet.Analyze(BuiltInModels.Rotor, [1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3], Template with { Seed = seed });
        var theta = SimulatedSet.Analyze(BuiltInModels.ThetaNeuron, [0.005, 0.01, 0.02, 0.04, 0.07, 0.1, 0.15, 0.2], Template with { Seed = seed });
        foreach (var report in new[] { rotor, theta })
        {
            output.WriteLine(report.Verdict.Evidence);
            Assert.Equal(OnsetKind.SaddleNodeOnCircle, report.Verdict.Kind);
            Assert.Equal(RouteStatus.Applicable, report.Verdict.RouteStatus);
            Assert.True(report.Verdict.Weights!.SaddleNode >= OnsetKindDecision.DecisiveWeight);
            Assert.True(report.Verdict.MinimumSpeed!.ReachesZero);
        }
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void Verdict_OnDampedPendulumRunningBranch_IsHomoclinicAndBottleneckRouteIsMarkedUnreliable(int seed)
    {
        const double gamma = 0.25;
        var tauC = PendulumOnset(gamma);

        // Distances from 10⁻⁴ to 10⁻¹: the period grows by −(1/λ)ln d, λ ≈ 0.86, i.e. by about 8 time units over the range.
        double[] ds = [1e-4, 3e-4, 1e-3, 3e-3, 0.01, 0.03, 0.1];
        var report = PlanarSet.Analyze(new DampedPendulum(gamma), ds.Select(d => tauC + d).ToList(), Template with { Seed = seed });
        output.WriteLine(report.Verdict.Evidence);
        Assert.Equal(OnsetKind.Homoclinic, report.Verdict.Kind);
        Assert.Equal(RouteStatus.Unreliable, report.Verdict.RouteStatus);
        Assert.False(string.IsNullOrEmpty(report.Verdict.RouteStatusReason));
        Assert.Contains("unreliable", TextFormat(report), StringComparison.Ordinal);

        // The logarithmic law's onset is within half the nearest run's distance (5·10⁻⁵) of the shooting reference:
        // the O(d ln d) corrections of the law shift it by a fraction of d_min (common practice, no source).
        var log = report.Verdict.Weights!.Fits.Single(f => f.Law == PeriodLaw.Homoclinic);
        Assert.InRange(log.Onset, tauC - 5e-5, tauC + 5e-5);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void Verdict_OnStuartLandauOscillator_IsFinitePeriodAndRoutesDoNotApply(int seed)
    {
        // Stuart–Landau: period 2π/(ω − cμ) finite at μc = 0 (Kuramoto 1984, §2.2); ω = 1, c = −1.
        var report = PlanarSet.Analyze(new StuartLandau(1.0, -1.0), [0.02, 0.04, 0.07, 0.1, 0.15, 0.2, 0.3], Template with { Seed = seed });
        output.WriteLine(report.Verdict.Evidence);
        Assert.Equal(OnsetKind.FinitePeriod, report.Verdict.Kind);
        Assert.Equal(RouteStatus.NotApplicable, report.Verdict.RouteStatus);
        Assert.False(report.Verdict.MinimumSpeed!.ReachesZero);
    }

    [Fact]
    public void Verdict_WithTooFewRunsNearOnset_IsUndeterminedNotSaddleNode()
    {
        // Four rotor runs far from onset, three revolutions each. There T = 2π/√((μ − 1)(μ + 1)) (Adler 1946) is not yet
        // the square-root law: its local exponent d ln T/d ln(1/(μ − 1)) = ½ + ½(μ − 1)/(μ + 1) is 0.60–0.68 at μ = 1.5–2.1,
        // so β excludes ½ and no kind may be declared.
        var report = SimulatedSet.Analyze(BuiltInModels.Rotor, [1.5, 1.7, 1.9, 2.1], Template with { Seed = 4, Revolutions = 3, MeasurementNoise = 0.05 });
        output.WriteLine(report.Verdict.Evidence);
        Assert.Equal(OnsetKind.Undetermined, report.Verdict.Kind);
        Assert.True(report.Scaling!.Ci95.Low > 0.5 + ScalingFit.EquivalenceMargin);
    }

    [Fact]
    public void PendulumSimulator_Period_MatchesTheLogarithmicLawSlope()
    {
        // Near a homoclinic onset T(d₁) − T(d₂) → (1/λ)ln(d₂/d₁), λ the saddle's unstable eigenvalue (Gaspard 1990;
        // Strogatz §8.4). Over d = 10⁻⁴ → 10⁻³ the O(d) corrections are ≲ 1%: tolerance 3%.
        var p = new DampedPendulum(0.25);
        var tauC = PendulumOnset(0.25);
        double Period(double d)
        {
            var run = PlanarSimulator.Run(p, new SimulationOptions { Mu = tauC + d, Revolutions = 3, SamplingInterval = 0.005, WrapPhase = false });
            var ph = run.TruePhase;
            var crossings = new List<double>();
            for (var i = 1; i < ph.Length; i++)
            {
                var level = Math.Floor((ph[i - 1] - ph[0]) / (2 * Math.PI)) + 1;
                var target = ph[0] + (level * 2 * Math.PI);
                if (ph[i] >= target && ph[i - 1] < target)
                {
                    crossings.Add(run.Time[i - 1] + ((target - ph[i - 1]) / (ph[i] - ph[i - 1]) * (run.Time[i] - run.Time[i - 1])));
                }
            }

            return crossings[^1] - crossings[^2];
        }

        var expected = Math.Log(10) / p.SaddleExpansion(tauC);
        var got = Period(1e-4) - Period(1e-3);
        Assert.InRange(got, 0.97 * expected, 1.03 * expected);
    }

    private static string TextFormat(AnalysisReport report) => NormalFormFit.Reporting.TextReport.Format(report);
}
