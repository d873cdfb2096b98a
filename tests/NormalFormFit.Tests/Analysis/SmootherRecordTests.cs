using System.Text;
using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Reporting;
using NormalFormFit.Simulation;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Tests.Analysis;

/// <summary>The run lines and the JSON report say which smoother a run used, with its λ.</summary>
public sealed class SmootherRecordTests
{
    // Invented demo scenario: one rotor run θ̇ = μ − sin θ, about 5 900 samples.
    private static readonly SimulatedRun Sim = Simulator.Run(BuiltInModels.Rotor,
        new SimulationOptions { Mu = 1.05, Revolutions = 6, SamplingInterval = 0.02, MeasurementNoise = 0.01, Seed = 7 });

    // Auto choice with the threshold moved below the run's length: the penalised spline, as a 2·10⁵-sample run gets by default.
    private static readonly RunOptions PenalizedByLength = new() { Smoothing = new SmoothingOptions { PenalizedFrom = 1_000 } };

    [Fact]
    public void Runs_ShorterAndLongerThanTheThreshold_RecordTheExactAndThePenalizedSpline()
    {
        var exact = SimulatedSet.AnalyzeOne(Sim);
        var penalized = SimulatedSet.AnalyzeOne(Sim, PenalizedByLength);

        Assert.Equal(SmoothingMethod.Exact, exact.Smoothing!.Smoother);
        Assert.Equal(SmoothingMethod.Penalized, penalized.Smoothing!.Smoother);
    }

    [Fact]
    public void RunLines_ThenJsonReport_KeepTheSmootherAndLambdaOfEachRun()
    {
        var runs = new[] { SimulatedSet.AnalyzeOne(Sim), SimulatedSet.AnalyzeOne(Sim, PenalizedByLength) };
        using var lines = new MemoryStream();
        RunLines.Write(new RunSet(runs, null), lines);
        var path = Path.GetTempFileName();
        try
        {
            File.WriteAllBytes(path, lines.ToArray());
            var back = RunLines.Read([path]).Value!.Runs;

            Assert.Equal(runs.Select(r => r.Smoothing), back.Select(r => r.Smoothing));
            using var doc = JsonDocument.Parse(ReportJson(back));
            var json = doc.RootElement.GetProperty("runs");
            Assert.Equal("exact-spline", json[0].GetProperty("smoothing").GetProperty("smoother").GetString());
            Assert.Equal("penalized-spline", json[1].GetProperty("smoothing").GetProperty("smoother").GetString());
            Assert.Equal(runs[1].Smoothing!.Lambda, json[1].GetProperty("smoothing").GetProperty("lambda").GetDouble());
        }
        finally
        {
            File.Delete(path);
        }
    }

    [Fact]
    public void RunLine_WithoutTheSmootherKey_ReadsAsUnknownAndReportsNull()
    {
        // Lines written before the key existed: read, with the smoother unknown rather than guessed.
        using var lines = new MemoryStream();
        RunLines.Write(new RunSet([SimulatedSet.AnalyzeOne(Sim)], null), lines);
        var text = Encoding.UTF8.GetString(lines.ToArray());
        Assert.Contains(",\"smoother\":\"exact-spline\"", text, StringComparison.Ordinal);
        var path = Path.GetTempFileName();
        try
        {
            File.WriteAllText(path, text.Replace(",\"smoother\":\"exact-spline\"", string.Empty, StringComparison.Ordinal));
            var back = RunLines.Read([path]).Value!.Runs;

            Assert.Null(back[0].Smoothing!.Smoother);
            using var doc = JsonDocument.Parse(ReportJson(back));
            Assert.Equal(JsonValueKind.Null, doc.RootElement.GetProperty("runs")[0].GetProperty("smoothing").GetProperty("smoother").ValueKind);
        }
        finally
        {
            File.Delete(path);
        }
    }

    [Fact]
    public void RunLine_WithAnUnknownSmootherName_IsRefusedNamingTheLine()
    {
        using var lines = new MemoryStream();
        RunLines.Write(new RunSet([SimulatedSet.AnalyzeOne(Sim)], null), lines);
        var path = Path.GetTempFileName();
        try
        {
            File.WriteAllText(path, Encoding.UTF8.GetString(lines.ToArray()).Replace("exact-spline", "b-spline", StringComparison.Ordinal));
            var read = RunLines.Read([path]);

            var error = Assert.Single(read.Diagnostics);
            Assert.Equal((path, 1), (error.File, error.Line));
            Assert.Contains("b-spline", error.Message, StringComparison.Ordinal);
        }
        finally
        {
            File.Delete(path);
        }
    }

    private static string ReportJson(IReadOnlyList<RunResult> runs)
    {
        using var stream = new MemoryStream();
        JsonReport.Write(OnsetAnalysis.Combine(runs), stream);
        return Encoding.UTF8.GetString(stream.ToArray());
    }
}
