using System.Globalization;
using MathNet.Numerics.Distributions;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// The calibration matrix: seeded repeats of whole analyses over the conditions a user meets — measurement noise over a
/// factor ten, 3 to 20 revolutions a run, runs crowded near onset or spread out, with and without phase diffusion,
/// sampling intervals from 0.005 to 0.1, the
/// rotor θ̇ = μ − sin θ (μc = 1, Adler 1946) and the theta neuron θ̇ = 1 − cos θ + (1 + cos θ)μ (μc = 0, Ermentrout &amp;
/// Kopell 1986). Each cell checks, for the bottleneck route, the period route and the scaling exponent (β = ½,
/// Strogatz, Nonlinear Dynamics and Chaos, 2nd ed., §4.3): coverage of the 95% interval within the two-sided 99%
/// binomial band, the estimates on both sides of the truth (two-sided sign test at level 0.01), and RMS z at least the
/// lower 0.001 point of √(χ²_R/R) (intervals about 1.5 times too wide fail it).
/// </summary>
/// <remarks>
/// <para>Bands: binomial quantiles as <c>scipy.stats.binom.ppf</c> defines them (the smallest k with CDF(k) ≥ q),
/// computed with MathNet.Numerics' <c>Binomial.CDF</c>; χ² quantile by MathNet's <c>ChiSquared.InvCDF</c>.</para>
/// <para>CI runs the cells marked <c>Ci</c> (about 40 s CPU). The whole matrix, with its table for docs/methods.md:
/// <c>NFFIT_CALIBRATION_MATRIX=full dotnet test NormalFormFit.sln --filter "FullyQualifiedName~CalibrationMatrixTests"
/// --logger "console;verbosity=detailed"</c>; a failing cell fails that run, and is listed as open in the docs.</para>
/// </remarks>
public class CalibrationMatrixTests(ITestOutputHelper output)
{
    /// <summary>One cell of the matrix.</summary>
    /// <param name="Open">Quantities measured out of band (open gaps, docs/methods.md "Calibration matrix"): asserted as
    /// measured, out of band, so that a fix shows here and the cell becomes a calibration check.</param>
    /// <param name="SamplingInterval">Time between samples (0.02 in most cells).</param>
    public sealed record Cell(string Model, double Noise, int Revolutions, string Spacing, double Diffusion, int Repeats, bool Ci, string[]? Open = null, double SamplingInterval = 0.02)
    {
        public override string ToString() => string.Create(CultureInfo.InvariantCulture, $"{Model} noise {Noise} revs {Revolutions} {Spacing} D {Diffusion}{(SamplingInterval != 0.02 ? $" dt {SamplingInterval}" : "")}");
    }

    private static readonly Cell[] All =
    [
        // Open gaps (docs/methods.md "Calibration matrix"), asserted as measured so that a fix shows: the rotor's exponent
        // with runs crowded near onset (49/60, 9 above) and with phase diffusion (54 of 60 above); the period route's sign
        // test with diffusion on the theta neuron (19 of 60 above, p 0.006). The exponent with three revolutions (49/60
        // with the runs' raw errors) is in band since the errors are smoothed across μ (53/60).
        // The bottleneck route with three revolutions (51/60 while its trend scaled down by χ²/ν < 1) is in band since it
        // scales only up (58/60).
        new("rotor", 0.01, 5, "spread", 0, 40, Ci: true),
        new("theta-neuron", 0.01, 5, "spread", 0, 40, Ci: true),
        new("rotor", 0.002, 5, "spread", 0, 60, Ci: false),
        new("rotor", 0.02, 5, "spread", 0, 60, Ci: false),
        new("rotor", 0.01, 3, "spread", 0, 60, Ci: false),
        new("rotor", 0.01, 10, "spread", 0, 60, Ci: false),
        new("rotor", 0.01, 20, "spread", 0, 60, Ci: false),
        new("rotor", 0.01, 5, "crowded", 0, 60, Ci: false, Open: ["exponent"]),
        new("rotor", 0.01, 5, "spread", 0.002, 60, Ci: false, Open: ["exponent"]),
        new("theta-neuron", 0.002, 5, "spread", 0, 60, Ci: false),
        new("theta-neuron", 0.02, 5, "spread", 0, 60, Ci: false),
        new("theta-neuron", 0.01, 10, "spread", 0, 60, Ci: false),
        new("theta-neuron", 0.01, 5, "crowded", 0, 60, Ci: false),
        new("theta-neuron", 0.01, 5, "spread", 0.002, 60, Ci: false, Open: ["period"]),

        // The sampling interval: five times coarser (up to 0.23 rad a sample on the rotor's fast side) and four times finer.
        new("rotor", 0.01, 5, "spread", 0, 60, Ci: false, SamplingInterval: 0.1),
        new("theta-neuron", 0.01, 5, "spread", 0, 60, Ci: false, SamplingInterval: 0.005),
    ];

    private static bool Full => string.Equals(Environment.GetEnvironmentVariable("NFFIT_CALIBRATION_MATRIX"), "full", StringComparison.Ordinal);

    public static TheoryData<int> Cells()
    {
        var data = new TheoryData<int>();
        var only = Environment.GetEnvironmentVariable("NFFIT_CALIBRATION_CELLS")?.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)
            .Select(c => int.Parse(c, CultureInfo.InvariantCulture)).ToHashSet();
        for (var i = 0; i < All.Length; i++)
        {
            if (only is not null ? only.Contains(i) : Full || All[i].Ci)
            {
                data.Add(i);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Cells))]
    public void Cell_CoversWithinTheBinomialBand_WithEstimatesOnBothSides_AndIntervalsNotTooWide(int index)
    {
        var cell = All[index];
        Assert.True(BuiltInModels.TryGet(cell.Model, out var model));
        var truth = cell.Model == "rotor" ? 1.0 : 0.0;
        // Distances above onset: spread over a factor 15, or crowded within a factor 4 near onset (invented designs).
        double[] distances = cell.Spacing == "crowded" ? [0.01, 0.013, 0.017, 0.022, 0.03, 0.04] : [0.02, 0.04, 0.07, 0.1, 0.15, 0.3];
        if (cell.Model == "theta-neuron")
        {
            distances = [.. distances.Select(d => d / 2)];
        }

        var mus = distances.Select(d => truth + d).ToArray();
        var a = new Tally();
        var t = new Tally();
        var b = new Tally();
        for (var r = 0; r < cell.Repeats; r++)
        {
            var template = new SimulationOptions
            {
                Revolutions = cell.Revolutions,
                SamplingInterval = cell.SamplingInterval,
                MeasurementNoise = cell.Noise,
                DynamicNoise = cell.Diffusion,
                Seed = 52_000 + (index * 1000) + (r * 13),
            };
            var report = SimulatedSet.Analyze(model, mus, template);
            a.Add(report.FromBottleneck.Value, report.FromBottleneck.StandardError, report.FromBottleneck.Ci95, truth);
            t.Add(report.FromPeriod.Value, report.FromPeriod.StandardError, report.FromPeriod.Ci95, truth);
            if (report.Scaling is { } s)
            {
                b.Add(s.Exponent.Value, s.Exponent.StandardError, s.Ci95, 0.5);
            }
        }

        var (low, high) = (BinomialPpf(0.005, cell.Repeats, 0.95), BinomialPpf(0.995, cell.Repeats, 0.95));
        var rmsFloor = Math.Sqrt(ChiSquared.InvCDF(cell.Repeats, 0.001) / cell.Repeats);
        var failures = new List<string>();
        foreach (var (name, tally) in new[] { ("bottleneck", a), ("period", t), ("exponent", b) })
        {
            var signP = SignTestP(tally.Above, tally.Count);
            var ok = tally.Count == cell.Repeats && tally.Covered >= low && tally.Covered <= high && signP >= 0.01 && tally.RmsZ >= rmsFloor;
            output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"| {cell} | {name} | {tally.Covered}/{tally.Count} | [{low}, {high}] | {tally.Above} above, p {signP:F3} | {tally.RmsZ:F2} | {(ok ? "in band" : "OUT")}{(cell.Open?.Contains(name) == true ? " (open)" : "")} |"));
            var open = cell.Open?.Contains(name) == true;
            if (ok == open)
            {
                failures.Add(open ? name + " (listed as open, now in band: make it a check)" : name);
            }
        }

        Assert.True(failures.Count == 0, $"{cell}: out of band: {string.Join(", ", failures)}");
    }

    /// <summary>The smallest k with P(X ≤ k) ≥ q, X ~ Binomial(n, p): scipy.stats.binom.ppf's definition.</summary>
    internal static int BinomialPpf(double q, int n, double p)
    {
        for (var k = 0; k <= n; k++)
        {
            if (Binomial.CDF(p, n, k) >= q - 1e-12)
            {
                return k;
            }
        }

        return n;
    }

    /// <summary>Two-sided exact sign test: P(|X − n/2| ≥ |k − n/2|), X ~ Binomial(n, ½).</summary>
    internal static double SignTestP(int k, int n)
    {
        if (n == 0)
        {
            return 0;
        }

        var tail = Math.Min(k, n - k);
        return Math.Min(1.0, 2 * Binomial.CDF(0.5, n, tail));
    }

    private sealed class Tally
    {
        private readonly List<double> z = [];

        public int Count { get; private set; }

        public int Covered { get; private set; }

        public int Above { get; private set; }

        public double RmsZ => z.Count == 0 ? double.NaN : Math.Sqrt(z.Average(x => x * x));

        public void Add(double value, double se, Interval ci, double truth)
        {
            if (!double.IsFinite(value))
            {
                return;
            }

            Count++;
            Covered += ci.Contains(truth) ? 1 : 0;
            Above += value > truth ? 1 : 0;
            z.Add((value - truth) / se);
        }
    }
}
