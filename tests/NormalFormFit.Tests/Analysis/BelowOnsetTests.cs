using NormalFormFit.Analysis;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>Runs below onset: recognised as resting, their relaxation rate measured and used by the period route.</summary>
public class BelowOnsetTests(ITestOutputHelper output)
{
    private static readonly double[] Turning = [1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3];
    private static readonly double[] Resting = [0.97, 0.98, 0.99];

    private static AnalysisReport Analyze(IEnumerable<double> mus, int seed)
    {
        var runs = mus.Select((mu, i) => SimulatedSet.AnalyzeOne(Simulator.Run(BuiltInModels.Rotor, new SimulationOptions
        {
            Mu = mu,
            Revolutions = 5,
            SamplingInterval = 0.02,
            MeasurementNoise = 0.01,
            MaxDuration = 150,
            Seed = GaussianSource.DeriveSeed(seed, i),
        }))).ToList();
        return OnsetAnalysis.Combine(runs);
    }

    [Fact]
    public void RestingRotorRuns_AreNotTurning_HaveNoPeriod_AndRelaxAtTheLinearisedRate()
    {
        var report = Analyze(Resting, 21);
        foreach (var r in report.Runs)
        {
            output.WriteLine($"{r.Param}: κ = {r.Relaxation?.Rate} window {r.Relaxation?.Window}");
            Assert.Contains(RunFlag.NotTurning, r.Flags);
            Assert.Null(r.Period);
            Assert.NotNull(r.Relaxation);

            // θ̇ = μ − sin θ relaxes at its stable point sin θ = μ at the rate cos θ = √(1 − μ²) (linearisation; exact).
            // Tolerance: 4 standard errors plus 2% for the curvature left in the fit window (common practice, no source).
            var exact = Math.Sqrt(1 - (r.Param * r.Param));
            Assert.InRange(r.Relaxation!.Rate.Value, exact - (4 * r.Relaxation.Rate.StandardError) - (0.02 * exact), exact + (4 * r.Relaxation.Rate.StandardError) + (0.02 * exact));
        }

        using var json = new MemoryStream();
        NormalFormFit.Reporting.JsonReport.Write(report, json);
        using var doc = System.Text.Json.JsonDocument.Parse(json.ToArray());
        var run = doc.RootElement.GetProperty("runs")[0];
        Assert.Equal(System.Text.Json.JsonValueKind.Null, run.GetProperty("period").GetProperty("measured").ValueKind);
        Assert.True(run.GetProperty("relaxation").GetProperty("rate").GetDouble() > 0);
    }

    [Fact]
    public void RunsBelowOnset_EnterThePeriodRoute_AndNarrowItsInterval()
    {
        // For the rotor −κ²/4π² = (μ² − 1)/4π² = T⁻² exactly (Adler 1946 period, linearised rate): one line through μc = 1.
        var without = Analyze(Turning, 5);
        var with = Analyze(Turning.Concat(Resting), 5);
        output.WriteLine($"without [{without.FromPeriod.Ci95.Low}, {without.FromPeriod.Ci95.High}], with [{with.FromPeriod.Ci95.Low}, {with.FromPeriod.Ci95.High}]");
        foreach (var r in with.Runs)
        {
            output.WriteLine($"{r.Param}: κ = {r.Relaxation?.Rate} T = {r.Period?.Measured}");
        }

        foreach (var d in with.AllDiagnostics)
        {
            output.WriteLine(d.ToString());
        }
        // Every resting run whose settling was resolved enters (a run that starts at rest shows no decay).
        Assert.Equal(with.Runs.Count(r => r.Relaxation is not null), with.FromPeriod.RunsBelowOnset);
        Assert.True(with.FromPeriod.RunsBelowOnset >= 2);
        Assert.True(with.FromPeriod.Ci95.Contains(1.0));
        Assert.True(with.FromPeriod.Ci95.Width < without.FromPeriod.Ci95.Width);
    }

    [Fact]
    public void RestingRunsOnTheTurningSide_AreFlaggedBistable_WithoutBreakingTheOnset()
    {
        // The damped pendulum rests and runs for τc < τ < 1 (Strogatz §8.5): a run started at rest at τ = 0.5 stays there.
        var p = new DampedPendulum(0.25);
        var runs = new List<RunResult>();
        double[] taus = [0.3135, 0.3137, 0.3145, 0.317, 0.325, 0.345];
        for (var i = 0; i < taus.Length; i++)
        {
            runs.Add(SimulatedSet.AnalyzeOne(PlanarSimulator.Run(p, new SimulationOptions { Mu = taus[i], Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01, Seed = i + 1 })));
        }

        var rest = new RestingPendulum(0.25);
        runs.Add(SimulatedSet.AnalyzeOne(PlanarSimulator.Run(rest, new SimulationOptions { Mu = 0.5, Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01, MaxDuration = 100, Seed = 9 })));
        var report = OnsetAnalysis.Combine(runs);
        Assert.Contains(RunFlag.Bistable, report.FlagsOf(report.Runs[^1]));
        Assert.True(report.FromPeriod.IsAvailable);
        Assert.Contains(report.Diagnostics, d => d.Code == "bistable");
    }

    /// <summary>The same pendulum started near its stable equilibrium (on the resting branch).</summary>
    private sealed class RestingPendulum(double damping) : IPlanarSystem
    {
        private readonly DampedPendulum inner = new(damping);

        public string Name => "pendulum-at-rest";

        public string Formula => inner.Formula;

        public void Rate(double x0, double x1, double mu, out double rate0, out double rate1) => inner.Rate(x0, x1, mu, out rate0, out rate1);

        public double Phase(double x0, double x1) => x0;

        public (double X0, double X1) Start(double mu) => (Math.Asin(mu) + 0.3, 0.0);
    }
}
