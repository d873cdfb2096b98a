using System.Security.Cryptography;
using System.Text;
using NormalFormFit.Reporting;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Cli;
using NormalFormFit.Tests.Ingest;
using NormalFormFit.Tests.Reporting;

namespace NormalFormFit.Tests.Golden;

/// <summary>
/// The command line's outputs on fixed scenarios, byte for byte against files kept in <c>Golden/expected</c>.
/// A restructuring must leave every one of them unchanged; a deliberate change of results regenerates them with
/// <c>NFFIT_UPDATE_GOLDEN=1 dotnet test NormalFormFit.sln --filter "FullyQualifiedName~GoldenOutputTests"</c>
/// and says why in its commit. The expected files are outputs of this program (not outside references): they pin
/// behaviour, the accuracy tests elsewhere check it against the truth.
/// </summary>
public class GoldenOutputTests
{
    private static readonly string ExpectedFolder = Path.Combine(RepoRoot(), "tests", "NormalFormFit.Tests", "Golden", "expected");

    [Fact]
    public void Demo_AnalyzeJsonSummaryAndRunLines_AreUnchanged()
    {
        var manifest = Path.Combine(RepoRoot(), "datasets", "demo-stirrer", "manifest.csv");
        Check("demo-analyze.json", Cli("analyze", manifest, "--json", "-"));
        Check("demo-summary.txt", Cli("analyze", manifest));

        // Run lines of the current layout (nffit-run/2); demo-runs.jsonl keeps the earlier layout's sample.
        using var dir = CliTestHost.NewFolder();
        var lines = dir.File("demo-runs.jsonl");
        Cli("analyze", manifest, "--runs-only", lines);
        Check("demo-runs-v2.jsonl", File.ReadAllText(lines));
        Check("demo-analyze.json", Cli("combine", lines, "--json", "-"));
    }

    [Fact]
    public void RunLinesWrittenByEarlierVersion_CombineToTheDemoReport()
    {
        // demo-runs.jsonl was written by `analyze --runs-only` of the version that made the golden files (layout
        // nffit-run/1): a later version must still read it and give the report that version gave (demo-combine-v1.json,
        // its demo-analyze.json). The per-run fit has changed since (the bottleneck's Taylor terms are removed), so the
        // report of the recordings analysed now is a different file.
        var combined = Cli("combine", Path.Combine(ExpectedFolder, "demo-runs.jsonl"), "--json", "-");
        Check("demo-combine-v1.json", combined);
    }

    [Fact]
    public void RunLinesWrittenByEarlierVersion_OfEveryKindOfRun_ReadBackAsTheRunsAnalysedNow()
    {
        // mixed-runs-v1.jsonl was written by `analyze --runs-only` of the version that made the golden files (layout
        // nffit-run/1), on MixedRunScenario: positions (orbit), resting runs (relaxation), spike times, noise estimates,
        // and NaN written as a string. It must still read: combined, and written again in the current layout, it gives
        // the pinned files mixed-v1-combined.json and mixed-runs-v1-as-v2.jsonl byte for byte. Until the phase-diffusion
        // estimate stopped taking differences across dropped frames and the bottleneck fit removed the field's Taylor terms
        // beyond the parabola, those equalled what the current version made of the same recordings; since then the noise
        // and bottleneck numbers differ (the analysis, not the reading, changed).
        using var files = new RecordingFiles();
        var manifest = MixedRunScenario.Write(files);
        Check("mixed-analyze.json", Cli("analyze", manifest, "--json", "-"));
        var earlier = Path.Combine(ExpectedFolder, "mixed-runs-v1.jsonl");
        Check("mixed-v1-combined.json", Cli("combine", earlier, "--json", "-"));

        using var rewritten = new MemoryStream();
        RunLines.Write(RunLines.Read([earlier]).Value!, rewritten);
        Check("mixed-runs-v1-as-v2.jsonl", Encoding.UTF8.GetString(rewritten.ToArray()));
    }

    [Fact]
    public void ThetaNeuronPhaseRuns_SimulatedFilesAndAnalysis_AreUnchanged()
    {
        using var dir = CliTestHost.NewFolder();
        Cli("simulate", "--model", "theta-neuron", "--params", "0.005,0.01,0.02,0.04,0.08,0.15", "--out", dir.Path,
            "--noise", "0.01", "--revolutions", "5", "--dt", "0.02", "--seed", "3", "--quiet");
        Check("theta-files.sha256", HashFolder(dir.Path));
        Check("theta-analyze.json", Cli("analyze", dir.File("manifest.csv"), "--json", "-"));
    }

    [Fact]
    public void RotorWithDiffusionAndRestingRuns_SimulatedFilesAndAnalysis_AreUnchanged()
    {
        using var dir = CliTestHost.NewFolder();
        Cli("simulate", "--model", "rotor", "--params", "0.97,0.99,1.01,1.02,1.04,1.07,1.1,1.15", "--out", dir.Path,
            "--noise", "0.01", "--diffusion", "0.0005", "--revolutions", "5", "--dt", "0.02", "--seed", "9", "--quiet");
        Check("rotor-diffusion-files.sha256", HashFolder(dir.Path));
        Check("rotor-diffusion-analyze.json", Cli("analyze", dir.File("manifest.csv"), "--json", "-"));
    }

    [Fact]
    public void CameraPositionsAndSpikeTimes_AnalysisIsUnchanged()
    {
        double[] mus = [1.01, 1.02, 1.04, 1.07, 1.1, 1.2];
        using var cam = new RecordingFiles();
        using var spikes = new RecordingFiles();
        for (var i = 0; i < mus.Length; i++)
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = mus[i], Revolutions = 5, SamplingInterval = 0.02, Seed = 31 + i });
            var track = CameraView.Project(sim, 1.0 / 2.4, new CameraOptions { Seed = 300 + i });
            cam.AddRun($"cam{i}.csv", mus[i], "t,x,y", track.Time, track.X, track.Y);
            spikes.AddRun($"spk{i}.csv", mus[i], "spike_time", CameraView.CrossingTimes(sim.Time, sim.TruePhase, Math.PI));
        }

        Check("camera-analyze.json", Cli("analyze", cam.WriteManifest(), "--y-down", "--json", "-"));
        Check("spikes-analyze.json", Cli("analyze", spikes.WriteManifest(), "--json", "-"));
    }

    [Fact]
    public void CompareOnFourRotorRuns_JsonIsUnchanged()
    {
        using var dir = CliTestHost.NewFolder();
        Cli("simulate", "--model", "rotor", "--params", "1.02,1.05,1.1,1.2", "--out", dir.Path,
            "--noise", "0.01", "--revolutions", "4", "--dt", "0.02", "--seed", "17", "--quiet");
        Check("compare-rotor.json", Cli("compare", dir.File("manifest.csv"), "--model", "mu - a*sin(theta)",
            "--replicates", "19", "--pilot", "4", "--seed", "5", "--json", "-"));
    }

    private static string Cli(params string[] args)
    {
        var (code, stdout, stderr) = CliTestHost.Run(args);
        Assert.True(code == 0, $"exit {code}: {stderr}");
        return stdout;
    }

    private static void Check(string name, string actual)
    {
        var path = Path.Combine(ExpectedFolder, name);
        if (Environment.GetEnvironmentVariable("NFFIT_UPDATE_GOLDEN") == "1")
        {
            File.WriteAllText(path, actual);
            return;
        }

        Assert.True(File.Exists(path), $"no expected file {path}; create it with NFFIT_UPDATE_GOLDEN=1");
        var expected = File.ReadAllText(path);
        if (expected != actual)
        {
            var at = Enumerable.Range(0, Math.Min(expected.Length, actual.Length)).FirstOrDefault(i => expected[i] != actual[i], Math.Min(expected.Length, actual.Length));
            Assert.Fail($"{name} differs from the expected file at character {at}: expected …{Around(expected, at)}…, got …{Around(actual, at)}…");
        }
    }

    private static string Around(string s, int at) => s.Substring(Math.Max(0, at - 60), Math.Min(s.Length, at + 60) - Math.Max(0, at - 60));

    private static string HashFolder(string folder)
    {
        // simulate's ownership marker lists these files' hashes and the tool's version; DataSafetyTests check it.
        var lines = Directory.GetFiles(folder).Where(f => Path.GetFileName(f) != ".nffit-simulation").Order(StringComparer.Ordinal)
            .Select(f => $"{Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(f)))}  {Path.GetFileName(f)}");
        return string.Join('\n', lines) + "\n";
    }

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "NormalFormFit.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("repository root not found");
    }
}
