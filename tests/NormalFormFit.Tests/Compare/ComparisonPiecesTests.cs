using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Field;
using NormalFormFit.Numerics;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Analysis;

namespace NormalFormFit.Tests.Compare;

/// <summary>
/// The pieces of a model comparison on their own: the problem's residuals and Jacobian, the onset search, the misfit
/// sums and the parametric bootstrap. Runs simulated from θ̇ = 0.05 + 0.9μ − sin θ + 0.12 sin 2θ (invented demo values)
/// at μ_lab = 1.15, 1.4, 1.8; 6 revolutions, dt 0.05, measurement noise 0.01 rad.
/// </summary>
public class ComparisonPiecesTests
{
    private static readonly double[] Labs = [1.15, 1.4, 1.8];
    private static readonly Lazy<List<RunResult>> DefaultRuns = new(() => Simulate(null));

    private static List<RunResult> Simulate(RunOptions? options)
    {
        var truth = ExpressionPhaseModel.Bind(ModelExpression.Parse("0.05 + 0.9*mu - a*sin(theta) + b*sin(2*theta)").Value!, new Dictionary<string, double> { ["a"] = 1.0, ["b"] = 0.12 }).Value!;
        return
        [
            .. Labs.Select((lab, i) => SimulatedSet.AnalyzeOne(
                Simulator.Run(truth, new SimulationOptions { Mu = lab, Revolutions = 6, SamplingInterval = 0.05, MeasurementNoise = 0.01, Seed = 4100 + i }),
                options)),
        ];
    }

    private static ComparisonProblem Problem(string expression, IReadOnlyList<RunResult>? runs = null) =>
        ComparisonProblem.Build(runs ?? DefaultRuns.Value, ModelExpression.Parse(expression).Value!, CompareOptions.Default, null);

    [Fact]
    public void Jacobian_OfFieldAndPeriodResiduals_MatchesCentralDifferences()
    {
        // Away from the fit, so that every residual and every column (a, b, c0, c1) is far from zero.
        var problem = Problem("mu - a*sin(theta) + b*sin(2*theta)");
        double[] q = [0.9, 0.1, 0.1, 0.95];
        Assert.Equal(4, problem.FreeCount);
        Assert.True(problem.Evaluate(q, out var r, out var jac));
        Assert.Equal(problem.Points, r.Length);
        Assert.Contains(problem.Runs, run => run.PeriodIndex >= 0);

        // Central differences, step h = 1e-6·max(1, |q|): truncation error O(h²) ≈ 1e-12 relative, rounding about
        // 1e-16·|r|/h ≈ 1e-10·|r|, both far below 1e-6 of the column's largest entry; an error in the chain rule (a
        // missing μ_lab factor in the c1 column, a wrong sign of a period row) is of order one.
        for (var u = 0; u < q.Length; u++)
        {
            var h = 1e-6 * Math.Max(1.0, Math.Abs(q[u]));
            var plus = (double[])q.Clone();
            var minus = (double[])q.Clone();
            plus[u] += h;
            minus[u] -= h;
            Assert.True(problem.Evaluate(plus, out var rp, out _));
            Assert.True(problem.Evaluate(minus, out var rm, out _));
            var scale = Enumerable.Range(0, r.Length).Max(i => Math.Abs(jac[i, u]));
            Assert.True(scale > 0);
            for (var i = 0; i < r.Length; i++)
            {
                Assert.Equal((rp[i] - rm[i]) / (2 * h), jac[i, u], 1e-6 * scale);
            }
        }
    }

    [Fact]
    public void HeldParameters_LeaveTheirColumnsOut()
    {
        var held = ComparisonProblem.Build(DefaultRuns.Value, ModelExpression.Parse("mu - a*sin(theta) + b*sin(2*theta)").Value!,
            new CompareOptions { Fixed = new Dictionary<string, double> { ["b"] = 0.1 }, FixedScale = 0.95 }, null);
        var free = Problem("mu - a*sin(theta) + b*sin(2*theta)");
        Assert.Equal(2, held.FreeCount);
        Assert.True(held.Evaluate([0.9, 0.1], out var rHeld, out var jHeld));
        Assert.True(free.Evaluate([0.9, 0.1, 0.1, 0.95], out var rFree, out var jFree));

        // The same model at the same full parameters: same residuals, and the free columns (a, c0) unchanged.
        Assert.Equal(rFree, rHeld);
        for (var i = 0; i < rFree.Length; i++)
        {
            Assert.Equal(jFree[i, 0], jHeld[i, 0]);
            Assert.Equal(jFree[i, 2], jHeld[i, 1]);
        }
    }

    [Fact]
    public void Onset_OfTheFirstHarmonicModel_IsWhereMuModelEqualsA()
    {
        // min_θ(μ − a·sin θ) = μ − a, zero at μ_model = a, so μ_lab = (a − c0)/c1 (elementary; common practice, no
        // source). Below every run's μ, so the search extends outwards. Tolerance: the root is solved to 1e-12
        // relative and the minimum over θ to 1e-10 in θ, which moves the minimum speed by a·δθ²/2 ≈ 1e-20.
        var problem = Problem("mu - a*sin(theta)");
        var onset = new OnsetSearch(problem).Find([0.8, 0.1, 0.9]);
        Assert.Equal((0.8 - 0.1) / 0.9, onset, 1e-9);
    }

    [Fact]
    public void Onset_OfTheTwoHarmonicModel_MatchesScipy()
    {
        // min_θ(μ − sin θ + 0.12 sin 2θ) = 0 at μ* = 1.027010688: SciPy 1.10.1 brentq/minimize_scalar,
        // Reference/compare_onset.py, printed to 9 decimals (tolerance 1e-9 covers the rounding). With c0 = 0, c1 = 1
        // the onset in μ_lab is μ* itself, between the first two runs' μ.
        var problem = Problem("mu - a*sin(theta) + b*sin(2*theta)");
        var onset = new OnsetSearch(problem).Find([1.0, 0.12, 0.0, 1.0]);
        Assert.Equal(1.027010688, onset, 1e-9);
    }

    [Fact]
    public void Onset_OfAModelWhoseSlowestSpeedStaysPositive_IsNaN()
    {
        // min_θ(1 + μ² − 0.5 sin θ) = 0.5 + μ² > 0 for every μ: no onset anywhere.
        var problem = Problem("1 + mu*mu - a*sin(theta)");
        Assert.True(double.IsNaN(new OnsetSearch(problem).Find([0.5, 0.0, 1.0])));
    }

    [Fact]
    public void MisfitSums_AddUpOverRunsAndOverRegions()
    {
        var problem = Problem("mu - a*sin(theta) + b*sin(2*theta)");
        Assert.True(problem.Evaluate([0.9, 0.1, 0.1, 0.95], out var r, out _));
        var m = Misfit.Of(problem, r, 8);

        // Every point belongs to one run and every field point to one region; sums of squares do not depend on order
        // beyond rounding (1e-12 relative).
        Assert.Equal(r.Sum(x => x * x), m.Total);
        Assert.Equal(m.Total, m.Run.Sum(), 1e-12 * m.Total);
        Assert.Equal(m.RunField.Sum(), m.Region.Sum(), 1e-12 * m.Total);
        Assert.Equal(m.RunFieldPoints.Sum(), m.RegionPoints.Sum());
        Assert.Equal(problem.Points, m.RunFieldPoints.Sum() + problem.Runs.Count(run => run.PeriodIndex >= 0));
    }

    [Fact]
    public void Bootstrap_AnalysesItsReplicatesWithTheOptionsItIsGiven()
    {
        // Runs analysed with 12 phase bins (the default chooses from the samples per revolution, 16 or more): their
        // replicates must come out with 12 bins too when analysed with the same options, and with more under the
        // defaults; the latter shows the check can tell the two apart.
        var twelve = new RunOptions { Field = FieldOptions.Default with { Bins = 12 } };
        var runs = Simulate(twelve);
        var problem = Problem("mu - a*sin(theta) + b*sin(2*theta)", runs);
        var fit = LevenbergMarquardt.Minimize(problem.Evaluate, problem.StartVector());
        var full = problem.Expand(fit.Parameters);
        var options = CompareOptions.Default with { Parallelism = 1 };

        var same = new ParametricBootstrap(problem, null, options, twelve).Draw(full, 2, 7);
        var defaults = new ParametricBootstrap(problem, null, options, RunOptions.Default).Draw(full, 1, 7);

        Assert.All(same, x => Assert.All(x!.Misfit.RunFieldPoints, n => Assert.InRange(n, 1, 12)));
        Assert.All(defaults, x => Assert.All(x!.Misfit.RunFieldPoints, n => Assert.True(n > 12)));
    }
}
