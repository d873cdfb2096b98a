using NormalFormFit.Compare;
using Xunit.Abstractions;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Analysis;

namespace NormalFormFit.Tests.Compare;

/// <summary>
/// Seeded Monte-Carlo repeats of a correct model (runs simulated from the very expression that is fitted), computed
/// once and shared by the checks below. Each repeat runs the whole comparison, 19 bootstrap replicates included.
/// </summary>
public sealed class CompareCalibrationRepeats
{
    /// <summary>Repeats: 40 keeps the compare tests within their CI budget (about 20 comparisons per core-minute).</summary>
    public const int Count = 40;

    /// <summary>First seed of the repeats; repeat r uses seeds FirstSeed + 10r + i for its runs i.</summary>
    public const int FirstSeed = 31_000;

    // μ_model = 0.05 + 0.9·μ_lab; onset of μ − sin θ + 0.12 sin 2θ at μ_model = 1.027011 (SciPy 1.10.1,
    // Reference/compare_onset.py), so μ_lab* = (1.027011 − 0.05)/0.9.
    public static readonly double[] Truth = [1.0, 0.12, 0.05, 0.9];
    public static readonly double OnsetTruth = (1.027011 - 0.05) / 0.9;
    private static readonly double[] Labs = [1.15, 1.3, 1.5, 1.8];

    public CompareCalibrationRepeats()
    {
        var model = ExpressionPhaseModel.Bind(ModelExpression.Parse("0.05 + 0.9*mu - a*sin(theta) + b*sin(2*theta)").Value!, new Dictionary<string, double> { ["a"] = 1.0, ["b"] = 0.12 }).Value!;
        var expr = ModelExpression.Parse("mu - a*sin(theta) + b*sin(2*theta)").Value!;
        Results = [.. Enumerable.Range(0, Count).Select(r =>
        {
            var runs = Labs.Select((lab, i) => SimulatedSet.AnalyzeOne(Simulator.Run(model, new SimulationOptions
            {
                Mu = lab,
                Revolutions = 6,
                SamplingInterval = 0.05,
                MeasurementNoise = 0.01,
                Seed = FirstSeed + (10 * r) + i,
            }))).ToList();
            return ModelComparer.Compare(runs, expr).Value!;
        })];
    }

    public IReadOnlyList<ModelComparison> Results { get; }
}

/// <summary>
/// Calibration of the verdict and the intervals over <see cref="CompareCalibrationRepeats.Count"/> seeded repeats.
/// Bands from the binomial distribution (SciPy 1.10.1 binom, Reference/compare_calibration_bands.py): with 40 repeats
/// a calibrated 5% test rejects 6 or more times with probability 0.014, and a 95% interval covers 34 or fewer times
/// with probability 0.014.
/// </summary>
public class CompareCalibrationTests(CompareCalibrationRepeats repeats, ITestOutputHelper output) : IClassFixture<CompareCalibrationRepeats>
{
    [Fact]
    public void CorrectModel_IsRejectedInAtMostFiveOfFortyRepeats_AndItsPValuesAverageAboutOneHalf()
    {
        var rejected = repeats.Results.Count(c => !c.Consistent);
        output.WriteLine($"rejected {rejected} of {CompareCalibrationRepeats.Count}; mean p {repeats.Results.Average(c => c.PValue):F3}");
        Assert.InRange(rejected, 0, 5);

        // Monte-Carlo p-values of an exact test are uniform on {1/20, …, 20/20}: mean 0.525, SD 0.288, so the mean
        // of 40 has SD 0.046; ±3 SD is [0.39, 0.66]. This also fails a test that never rejects (too conservative).
        Assert.InRange(repeats.Results.Average(c => c.PValue), 0.39, 0.66);
    }

    [Fact]
    public void ParameterIntervals_CoverTheTruth_InAtLeastThirtyFiveOfFortyRepeats()
    {
        for (var u = 0; u < 4; u++)
        {
            var covered = repeats.Results.Count(c =>
            {
                var p = c.Parameters.Append(c.Offset).Append(c.Scale).ElementAt(u);
                return p.Ci95.Low <= CompareCalibrationRepeats.Truth[u] && CompareCalibrationRepeats.Truth[u] <= p.Ci95.High;
            });
            output.WriteLine($"parameter {u}: {covered} of {CompareCalibrationRepeats.Count} cover");
            Assert.True(covered >= 35, $"parameter {u}: {covered} of {CompareCalibrationRepeats.Count} intervals cover the truth");
        }
    }

    [Fact]
    public void OnsetInterval_CoversTheModelsTrueOnset_InAtLeastThirtyFiveOfFortyRepeats()
    {
        var covered = repeats.Results.Count(c => c.OnsetCi95.Low <= CompareCalibrationRepeats.OnsetTruth && CompareCalibrationRepeats.OnsetTruth <= c.OnsetCi95.High);
        output.WriteLine($"onset: {covered} of {CompareCalibrationRepeats.Count} cover");
        Assert.True(covered >= 35, $"{covered} of {CompareCalibrationRepeats.Count} onset intervals cover the truth");
    }
}
