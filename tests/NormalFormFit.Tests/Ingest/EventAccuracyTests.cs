using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Ingest;

public class EventAccuracyTests(ITestOutputHelper output)
{
    // Theta neuron θ̇ = 1 − cos θ + (1 + cos θ)μ: onset μc = 0, period π/√μ (Ermentrout & Kopell 1986).
    private static readonly double[] Mus = [0.005, 0.01, 0.02, 0.04, 0.07, 0.1, 0.15, 0.2];

    private static RunResult[] SpikeRuns(int seed)
    {
        var runs = new RunResult[Mus.Length];
        for (var i = 0; i < Mus.Length; i++)
        {
            // Weak phase diffusion D = 10⁻⁵ makes the intervals scatter (as real spike trains do) without moving the
            // mean period by more than a fraction of its error at these μ (a^(3/2) ≥ 10⁻³ ≫ D).
            var sim = Simulator.Run(BuiltInModels.ThetaNeuron, new SimulationOptions
            {
                Mu = Mus[i],
                Revolutions = 8,
                SamplingInterval = 0.02,
                DynamicNoise = 1e-5,
                Seed = GaussianSource.DeriveSeed(seed, i),
            });
            var spikes = CameraView.CrossingTimes(sim.Time, sim.TruePhase, Math.PI);
            var rec = new EventRecording($"s{i}", spikes, [0]);
            runs[i] = RecordingAnalyzer.Analyze(rec, Mus[i], $"s{i}", null, null, []).Value!;
        }

        return runs;
    }

    [Fact]
    public void Onset_FromThetaNeuronSpikeTimes_ComesFromThePeriodRouteAndCoversTheTruth()
    {
        var report = OnsetAnalysis.Combine(SpikeRuns(7));
        var t = report.FromPeriod;
        output.WriteLine($"period route {t.Value} ± {t.StandardError} [{t.Ci95.Low}, {t.Ci95.High}]");
        Assert.False(report.FromBottleneck.IsAvailable);
        Assert.Contains(report.Diagnostics, d => d.Code == "bottleneck-not-available");
        Assert.All(report.Runs, r => Assert.Null(r.Bottleneck));
        Assert.True(t.Ci95.Contains(0.0), $"period interval [{t.Ci95.Low}, {t.Ci95.High}] misses 0");
        // 1% of the span, as for the camera (the period route has no bottleneck window to bias it).
        Assert.InRange(Math.Abs(t.Value), 0, 0.01 * (Mus[^1] - Mus[0]));
    }

    [Fact]
    public void SpikeTimeFiles_ThroughTheCommandLine_ReportTheBottleneckRouteAsNotAvailable()
    {
        using var files = new RecordingFiles();
        for (var i = 0; i < Mus.Length; i++)
        {
            var sim = Simulator.Run(BuiltInModels.ThetaNeuron, new SimulationOptions { Mu = Mus[i], Revolutions = 8, SamplingInterval = 0.02, DynamicNoise = 1e-5, Seed = 40 + i });
            files.AddRun($"spikes{i}.csv", Mus[i], "spike_time", CameraView.CrossingTimes(sim.Time, sim.TruePhase, Math.PI));
        }

        var manifest = files.WriteManifest();
        var (code, stdout, stderr) = MalformedInputTests.Run(["analyze", manifest, "--json", "-"]);
        Assert.True(code == 0, stderr);
        using var json = System.Text.Json.JsonDocument.Parse(stdout);
        var onset = json.RootElement.GetProperty("onset");
        Assert.Equal(System.Text.Json.JsonValueKind.Null, onset.GetProperty("from_bottleneck").GetProperty("value").ValueKind);
        var value = onset.GetProperty("from_period").GetProperty("value").GetDouble();
        Assert.InRange(value, onset.GetProperty("from_period").GetProperty("ci95_low").GetDouble(), onset.GetProperty("from_period").GetProperty("ci95_high").GetDouble());
        var run = json.RootElement.GetProperty("runs")[0];
        Assert.Equal("events", run.GetProperty("input_kind").GetString());
        Assert.Contains("periods-only", run.GetProperty("flags").EnumerateArray().Select(f => f.GetString()));
        Assert.Contains(json.RootElement.GetProperty("diagnostics").EnumerateArray(), d => d.GetProperty("code").GetString() == "bottleneck-not-available");
        var (_, text, _) = MalformedInputTests.Run(["analyze", manifest]);
        Assert.Matches(@"bottleneck route \(a → 0\):  [^\n]*not available", text);
    }

    [Fact]
    public void PeriodRouteIntervals_FromSpikeTimes_CoverTheTruthInSeededRepeats()
    {
        // 60 seeded repeats: at true coverage 95% the count of covering intervals is Binomial(60, 0.95), mean 57,
        // SD 1.7; requiring ≥ 51 (≈ 85%) fails a calibrated interval with probability < 0.1%, while an interval that
        // covers only 75% of the time passes with probability < 1%.
        const int repeats = 60;
        var cover = 0;
        var z = new List<double>();
        for (var r = 0; r < repeats; r++)
        {
            var t = OnsetAnalysis.Combine(SpikeRuns(1000 + r)).FromPeriod;
            cover += t.Ci95.Contains(0.0) ? 1 : 0;
            z.Add(t.Value / t.StandardError);
        }

        var rms = Math.Sqrt(z.Average(x => x * x));
        output.WriteLine($"coverage {cover}/{repeats}; mean z {z.Average():F2}, RMS z {rms:F2}");
        Assert.InRange(cover, 51, repeats);

        // Two-sided: intervals too wide cover every time too. With calibrated errors Σz² ~ χ²_60, so RMS z falls below
        // √(χ²_60(0.001)/60) ≈ 0.72 (MathNet's ChiSquared.InvCDF) with probability 0.001; errors 1.5 times too large
        // (RMS ≈ 0.67) fail. No upper bound on RMS z: the coverage bound above already fails intervals too narrow.
        Assert.True(rms >= Math.Sqrt(MathNet.Numerics.Distributions.ChiSquared.InvCDF(repeats, 0.001) / repeats), $"RMS z {rms:F2}: the standard errors are too large");
    }
}
