using System.Diagnostics;
using MathNet.Numerics;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Simulation;

public class SimulatorTests(ITestOutputHelper output)
{
    [Fact]
    public void Run_WithSameSeed_IsBitIdenticalAcrossThreads()
    {
        var options = new SimulationOptions { Mu = 1.2, MeasurementNoise = 0.05, DynamicNoise = 0.02, Seed = 42 };
        var reference = Simulator.Run(BuiltInModels.Rotor, options);
        var copies = new SimulatedRun[8];
        Parallel.For(0, copies.Length, k => copies[k] = Simulator.Run(BuiltInModels.Rotor, options));

        foreach (var copy in copies)
        {
            Assert.Equal(Bits(reference.Time), Bits(copy.Time));
            Assert.Equal(Bits(reference.Phase), Bits(copy.Phase));
            Assert.Equal(Bits(reference.TruePhase), Bits(copy.TruePhase));
        }
    }

    [Fact]
    public void Run_WithDifferentSeed_DiffersInInitialPhaseAndNoise()
    {
        var options = new SimulationOptions { Mu = 1.2, MeasurementNoise = 0.05, DynamicNoise = 0.02, Seed = 42 };
        var a = Simulator.Run(BuiltInModels.Rotor, options);
        var b = Simulator.Run(BuiltInModels.Rotor, options with { Seed = 43 });
        Assert.NotEqual(a.Options.InitialPhase, b.Options.InitialPhase);
        Assert.NotEqual(a.Phase[1], b.Phase[1]);
    }

    [Fact]
    public void Run_WithResolvedOptions_ReproducesItself()
    {
        var run = Simulator.Run(BuiltInModels.ThetaNeuron, new SimulationOptions { Mu = 0.3, DynamicNoise = 0.01, Seed = 5 });
        Assert.NotNull(run.Options.InitialPhase);
        Assert.NotNull(run.Options.Substeps);
        Assert.NotNull(run.Options.MaxDuration);
        var again = Simulator.Run(BuiltInModels.ThetaNeuron, run.Options);
        Assert.Equal(Bits(run.TruePhase), Bits(again.TruePhase));
    }

    [Fact]
    public void InitialPhase_DrawnFromSeed_IsUniformOnTheCircle()
    {
        // Uniform on (−π, π]: each quarter holds a quarter of the draws. With n = 2000 the binomial SD of a quarter's
        // share is √(0.25·0.75/2000) ≈ 0.0097; four SDs (0.04) fail a correct generator for about 1 seed set in 10⁴.
        const int n = 2000;
        var counts = new int[4];
        for (var seed = 0; seed < n; seed++)
        {
            var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 2.0, Seed = seed, MaxDuration = 0.01 });
            var theta0 = run.Options.InitialPhase!.Value;
            Assert.InRange(theta0, -Math.PI, Math.PI);
            Assert.NotEqual(-Math.PI, theta0);
            counts[Math.Min(3, (int)((theta0 + Math.PI) / (Math.PI / 2.0)))]++;
        }

        foreach (var count in counts)
        {
            Assert.InRange(count / (double)n, 0.25 - 0.04, 0.25 + 0.04);
        }
    }

    [Fact]
    public void MeasurementNoise_HasRequestedStandardDeviation_AndLeavesDynamicsUnchanged()
    {
        const double sigma = 0.05;
        var options = new SimulationOptions { Mu = 2.0, Revolutions = 100_000, MaxDuration = 1000.0, Seed = 11 };
        var clean = Simulator.Run(BuiltInModels.Rotor, options);
        var noisy = Simulator.Run(BuiltInModels.Rotor, options with { MeasurementNoise = sigma });

        // Measurement noise is a separate random stream: the dynamics are the same bits.
        Assert.Equal(Bits(clean.TruePhase), Bits(noisy.TruePhase));

        var n = noisy.Phase.Length;
        double sum = 0.0, sumSquares = 0.0;
        var withinOneSigma = 0;
        for (var i = 0; i < n; i++)
        {
            Assert.InRange(noisy.Phase[i], -Math.PI, Math.PI);
            var r = Simulator.Wrap(noisy.Phase[i] - noisy.TruePhase[i]);
            sum += r;
            sumSquares += r * r;
            withinOneSigma += Math.Abs(r) < sigma ? 1 : 0;
        }

        var mean = sum / n;
        var sd = Math.Sqrt((sumSquares - (n * mean * mean)) / (n - 1));

        // n ≈ 10⁵ Gaussian residuals. Standard errors (common practice, no source): mean σ/√n; sample SD σ/√(2n)
        // (0.22%); share within ±σ √(p(1−p)/n). Each check allows four standard errors.
        Assert.InRange(mean, -4.0 * sigma / Math.Sqrt(n), 4.0 * sigma / Math.Sqrt(n));
        Assert.InRange(sd / sigma, 1.0 - (4.0 / Math.Sqrt(2.0 * n)), 1.0 + (4.0 / Math.Sqrt(2.0 * n)));

        // P(|Z| < 1) = erf(1/√2) ≈ 0.6827, from MathNet.Numerics 5.0.0 SpecialFunctions.Erf(1/√2).
        var p = SpecialFunctions.Erf(1.0 / Math.Sqrt(2.0));
        var share = withinOneSigma / (double)n;
        Assert.InRange(share, p - (4.0 * Math.Sqrt(p * (1 - p) / n)), p + (4.0 * Math.Sqrt(p * (1 - p) / n)));
    }

    [Theory]
    [InlineData(1.0)]
    [InlineData(10.0)]
    public void DynamicNoise_OnConstantDrift_GrowsPhaseVarianceAsTwoDt(double lag)
    {
        // dθ = c dt + √(2D) dW: increments over a lag τ are N(cτ, 2Dτ) (common practice, no source). Euler–Maruyama is
        // exact in law for a constant drift, so only sampling error remains: the variance of m disjoint increments has
        // relative SE √(2/m) (1.4% at τ = 1, 4.5% at τ = 10); we allow four SEs.
        const double drift = 1.0, diffusion = 0.05, duration = 10_000.0, dt = 0.1;
        var model = PhaseModel.Create("constant", "dθ/dt = 1", (_, _) => drift);
        var run = Simulator.Run(model, new SimulationOptions
        {
            Mu = 0.0,
            SamplingInterval = dt,
            DynamicNoise = diffusion,
            Revolutions = int.MaxValue,
            MaxDuration = duration,
            InitialPhase = 0.0,
            Seed = 3,
        });

        var step = (int)Math.Round(lag / dt);
        var increments = new List<double>();
        for (var i = step; i < run.TruePhase.Length; i += step)
        {
            increments.Add(run.TruePhase[i] - run.TruePhase[i - step] - (drift * lag));
        }

        var m = increments.Count;
        var mean = increments.Average();
        var variance = increments.Sum(x => (x - mean) * (x - mean)) / (m - 1);
        var expected = 2.0 * diffusion * lag;
        Assert.InRange(variance / expected, 1.0 - (4.0 * Math.Sqrt(2.0 / m)), 1.0 + (4.0 * Math.Sqrt(2.0 / m)));
        Assert.InRange(mean, -4.0 * Math.Sqrt(expected / m), 4.0 * Math.Sqrt(expected / m));
    }

    [Theory]
    [InlineData("rotor", 0.5)]
    [InlineData("rotor", -0.9)]
    [InlineData("theta-neuron", -0.2)]
    public void Run_BelowOnset_SettlesWithZeroRevolutionsAndStopsAtMaxDuration(string name, double mu)
    {
        Assert.True(BuiltInModels.TryGet(name, out var model));
        Assert.Null(model.ExactPeriod(mu));
        const double maxDuration = 200.0;
        var run = Simulator.Run(model, new SimulationOptions { Mu = mu, MaxDuration = maxDuration, Seed = 9 });

        Assert.Equal(0, run.Revolutions);
        Assert.False(run.ReachedRevolutions);
        Assert.Equal(maxDuration, run.Time[^1], 1e-9);
        Assert.Equal(20_001, run.Time.Length);

        // Settled: at the stable node the speed decays as e^(−λt) with λ = |∂f/∂θ| there, λ ≥ 0.43 for these μ
        // (rotor √(1 − μ²), theta neuron 2√(−μ); derived from the model equations, no source), so after 200 time
        // units (e^(−86)) only round-off remains.
        Assert.True(Math.Abs(model.Velocity(run.TruePhase[^1], mu)) < 1e-10);
    }

    [Fact]
    public void Run_BelowOnsetWithDefaults_StopsAtFallbackDuration()
    {
        var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 0.9 });
        Assert.Equal(SimulationOptions.FallbackMaxDuration, run.Options.MaxDuration);
        Assert.Equal(SimulationOptions.FallbackMaxDuration, run.Time[^1], 1e-9);
        Assert.Equal(0, run.Revolutions);
    }

    [Fact]
    public void Run_AboveOnset_StopsAtFirstSampleAfterRequestedTurns()
    {
        var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.3, Revolutions = 4 });
        var start = run.TruePhase[0];
        Assert.True(run.ReachedRevolutions);
        Assert.Equal(4, run.Revolutions);
        Assert.True(run.TruePhase[^1] - start >= 8.0 * Math.PI);
        Assert.True(run.TruePhase[^2] - start < 8.0 * Math.PI);
        Assert.Equal(Simulator.Wrap(run.TruePhase[^1]), run.Phase[^1]);
    }

    [Fact]
    public void Run_OfRotorDrivenBackwards_CountsTurnsInEitherDirection()
    {
        // For μ < −1 the rotor turns backwards with the same period 2π/√(μ² − 1) (Adler 1946, by symmetry θ → −θ).
        var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = -1.5, Revolutions = 3 });
        Assert.True(run.ReachedRevolutions);
        Assert.Equal(3, run.Revolutions);
        Assert.True(run.TruePhase[^1] < run.TruePhase[0] - (6.0 * Math.PI) + 1e-12);
        Assert.Equal(2.0 * Math.PI / Math.Sqrt(1.25), BuiltInModels.Rotor.ExactPeriod(-1.5)!.Value, 1e-12);
    }

    [Fact]
    public void Run_WithoutWrapping_RecordsUnwrappedPhase()
    {
        var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.3, WrapPhase = false });
        Assert.Equal(Bits(run.TruePhase), Bits(run.Phase));
    }

    [Fact]
    public void SampleTimes_AreNearestDoublesToDecimalMultiples()
    {
        var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.3, Revolutions = 1 });
        Assert.Equal(0.03, run.Time[3]);
        Assert.Equal(1.17, run.Time[117]);
    }

    [Theory]
    [InlineData(-1.0, 0.25)]
    [InlineData(0.2, 3.0)]
    [InlineData(1.6, 2.0)]
    public void Wrap_MapsIntoHalfOpenInterval_KeepingTheAngle(double turns, double extra)
    {
        var theta = (2.0 * Math.PI * turns) + extra;
        var w = Simulator.Wrap(theta);
        Assert.InRange(w, -Math.PI, Math.PI);
        Assert.NotEqual(-Math.PI, w);
        Assert.Equal(Math.Sin(theta), Math.Sin(w), 1e-12);
        Assert.Equal(Math.Cos(theta), Math.Cos(w), 1e-12);
        Assert.Equal(Math.PI, Simulator.Wrap(-Math.PI));
    }

    [Fact]
    public void Validate_ListsEveryProblem_AndRunThrows()
    {
        var options = new SimulationOptions
        {
            Mu = double.NaN,
            Revolutions = 0,
            SamplingInterval = -1.0,
            MeasurementNoise = -0.1,
            DynamicNoise = double.PositiveInfinity,
            MaxDuration = 0.0,
            Substeps = 0,
            InitialPhase = double.NaN,
        };
        var problems = options.Validate();
        Assert.Equal(8, problems.Count);
        var error = Assert.Throws<ArgumentException>(() => Simulator.Run(BuiltInModels.Rotor, options));
        Assert.Contains("SamplingInterval", error.Message, StringComparison.Ordinal);
        Assert.Empty(new SimulationOptions().Validate());
    }

    [Fact]
    public void Validate_RejectsRunsLongerThanTheSampleLimit()
    {
        var options = new SimulationOptions { SamplingInterval = 1e-3, MaxDuration = 1e6 };
        Assert.Single(options.Validate());
    }

    [Theory]
    [InlineData("rotor")]
    [InlineData("ROTOR")]
    [InlineData("theta-neuron")]
    public void TryGet_FindsBuiltInModelsByName(string name)
    {
        Assert.True(BuiltInModels.TryGet(name, out var model));
        Assert.Equal(name, model.Name, ignoreCase: true);
        Assert.False(BuiltInModels.TryGet("pendulum", out _));
        Assert.Equal(2, BuiltInModels.All.Count);
    }

    [Fact]
    public void DefaultSubsteps_KeepsPhaseStepWithinDocumentedBound()
    {
        var options = new SimulationOptions { Mu = 20.0 };

        // max|f| = 21 for the rotor at μ = 20 (and |∂f/∂θ| ≤ 1): the step h = 0.01/substeps must satisfy 21·h ≤ 0.02
        // for RK4, 21·h ≤ 0.01 for Euler–Maruyama, with the smallest such count (documented rule).
        var rk4 = Simulator.DefaultSubsteps(BuiltInModels.Rotor, options);
        Assert.True(21.0 * options.SamplingInterval / rk4 <= 0.02 + 1e-12);
        Assert.True(21.0 * options.SamplingInterval / (rk4 - 1) > 0.02);

        var em = Simulator.DefaultSubsteps(BuiltInModels.Rotor, options with { DynamicNoise = 0.01 });
        Assert.True(21.0 * options.SamplingInterval / em <= 0.01 + 1e-12);
        Assert.True(21.0 * options.SamplingInterval / (em - 1) > 0.01);

        // Strong noise: the kick √(2Dh) ≤ 0.1 rad sets the step (D = 5: h ≤ 0.001).
        Assert.Equal(10, Simulator.DefaultSubsteps(BuiltInModels.Rotor, options with { Mu = 1.5, DynamicNoise = 5.0 }));
        Assert.Equal(2, Simulator.DefaultSubsteps(BuiltInModels.Rotor, options with { Mu = 1.5 }));
    }

    [Fact]
    public void Run_OfAMillionSamples_FinishesWithinSeconds()
    {
        // Budget from the design: 10⁶ samples well under a second on one core in a release build (measured about
        // 0.3 s on a loaded two-core machine). Tests run in debug and in parallel with others, so the bound is loose
        // (5 s): it catches order-of-magnitude regressions, not noise.
        var options = new SimulationOptions
        {
            Mu = 1.5,
            Revolutions = int.MaxValue,
            MaxDuration = 9999.99,
            MeasurementNoise = 0.01,
        };
        Simulator.Run(BuiltInModels.Rotor, options with { MaxDuration = 1.0 }); // warm-up (JIT)

        var clock = Stopwatch.StartNew();
        var run = Simulator.Run(BuiltInModels.Rotor, options);
        var deterministic = clock.Elapsed;
        clock.Restart();
        var noisy = Simulator.Run(BuiltInModels.Rotor, options with { DynamicNoise = 0.01 });
        var stochastic = clock.Elapsed;
        output.WriteLine($"10^6 samples: RK4 {deterministic.TotalMilliseconds:F0} ms, Euler–Maruyama {stochastic.TotalMilliseconds:F0} ms");

        Assert.Equal(1_000_000, run.Time.Length);
        Assert.Equal(1_000_000, noisy.Time.Length);
        Assert.True(deterministic < TimeSpan.FromSeconds(5), $"RK4 took {deterministic}");
        Assert.True(stochastic < TimeSpan.FromSeconds(5), $"Euler–Maruyama took {stochastic}");
    }

    private static long[] Bits(double[] values) => Array.ConvertAll(values, BitConverter.DoubleToInt64Bits);
}
