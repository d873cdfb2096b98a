using System.Globalization;
using System.Text;
using System.Text.Json;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Cli;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Compare;

/// <summary>
/// Acceptance of planar reduced models in <c>compare</c>: current-clamp sweeps (<c>time_ms,Vm_mV</c> at 20 kHz, a
/// manifest with the current and its unit, silent sweeps below onset) simulated from the Morris–Lecar model with the
/// class-I parameter set of Rinzel &amp; Ermentrout (1989; values from memory, see Simulation/MorrisLecar.cs) with a noisy
/// current and measurement noise, compared through the command line with the true system, with the class-II (Hopf)
/// set of the same paper (from memory: gCa 4.4, V3 2, V4 30, φ 0.04) and with a wrong class-I set (gCa 4.4, φ 0.1,
/// invented). The onset is checked against the knee of the steady-state current SciPy finds
/// (Reference/morris_lecar_knee.json).
/// </summary>
public class PlanarComparisonTests(PlanarSweepFolder sweeps, ITestOutputHelper output) : IClassFixture<PlanarSweepFolder>
{
    // Distances of the sweeps from the onset (μA/cm²): two silent, six firing. Invented demo levels: a noise current of
    // 1 μA/cm²·√ms and 0.3 mV of measurement noise; 2 s sweeps at 20 kHz.
    private static readonly double[] Offsets = [-1.5, -0.5, 0.5, 1, 2, 3.5, 5, 7];

    private const double CurrentNoise = 1.0;
    private const double MeasurementNoise = 0.3;
    private const double Duration = 2000;
    private const double Step = 0.05;

    internal static string ClassTwo => FormattableString.Invariant(
        $"v' = (mu - 2*(v + 60) - 4.4*0.5*(1 + tanh((v + 1.2)/18))*(v - 120) - 8*w*(v + 84))/20\nw' = 0.04*(0.5*(1 + tanh((v - 2)/30)) - w)*cosh((v - 2)/60)");

    internal static string WriteSweeps()
    {
        var model = MorrisLecar.ClassOne;
        var onset = model.RestSaddleNode().Current;
        var folder = Path.Combine(Path.GetTempPath(), "nffit-planar-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(folder);
        var manifest = new StringBuilder("file,I_app [uA/cm2]\n");
        for (var i = 0; i < Offsets.Length; i++)
        {
            var current = onset + Offsets[i];
            var track = model.Sweep(current, Duration, Step, restCurrent: 0, CurrentNoise, noiseSeed: 2400 + i);
            var measurement = GaussianSource.Create(2400 + i, stream: 2);
            var text = new StringBuilder("time_ms,Vm_mV\n");
            for (var k = 0; k < track.V.Length; k++)
            {
                text.Append(CultureInfo.InvariantCulture, $"{k * Step:F2},{track.V[k] + (MeasurementNoise * measurement.Next()):F3}\n");
            }

            var name = $"sweep_{i:00}.csv";
            File.WriteAllText(Path.Combine(folder, name), text.ToString());
            manifest.Append(CultureInfo.InvariantCulture, $"{name},{current:F4}\n");
        }

        File.WriteAllText(Path.Combine(folder, "manifest.csv"), manifest.ToString());
        return Path.Combine(folder, "manifest.csv");
    }

    private JsonElement Compare(string system, params string[] extra)
    {
        var json = Path.Combine(Path.GetDirectoryName(sweeps.Manifest)!, $"model-{Guid.NewGuid():N}.json");
        var (code, stdout, stderr) = CliTestHost.Run(["compare", sweeps.Manifest, "--model", system, "--observe", "v", "--initial", "v=-40", "--json", json, .. extra]);
        output.WriteLine(stdout);
        output.WriteLine(stderr);
        Assert.Equal(0, code);
        return JsonDocument.Parse(File.ReadAllText(json)).RootElement.GetProperty("model").Clone();
    }

    private static List<string?> Codes(JsonElement model) =>
        [.. model.GetProperty("diagnostics").EnumerateArray().Select(d => d.GetProperty("code").GetString())];

    [Fact]
    public void TheTrueSystem_IsConsistent_AndItsOnsetIsTheKnee()
    {
        var model = Compare(PlanarSystemPiecesTests.MorrisLecarSystem(), "--start", "c0=1,c1=0.98");
        Assert.True(model.GetProperty("consistent").GetBoolean());

        // A system is compared on periods: no turning sense, no phase regions (null, not a meaningless value).
        foreach (var key in new[] { "turning_sense", "regions", "worst_regions" })
        {
            Assert.Equal(JsonValueKind.Null, model.GetProperty(key).ValueKind);
        }

        // The map's truth is c0 = 0, c1 = 1 (the sweeps' current is the model's); the onset interval holds the knee of
        // I∞(V) that SciPy finds (Reference/morris_lecar_knee.json, 39.96315309), and the fold agrees with the
        // simulation's onset (a saddle-node on the invariant circle). Measured: 39.9754 ± 0.029, c1 = 1.0028 ± 0.0049.
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "Reference", "morris_lecar_knee.json")));
        var knee = json.RootElement.GetProperty("onset_current_uA_per_cm2").GetDouble();
        var onset = model.GetProperty("onset");
        Assert.InRange(knee, onset.GetProperty("ci95_low").GetDouble(), onset.GetProperty("ci95_high").GetDouble());
        Assert.InRange(onset.GetProperty("se").GetDouble(), 0.003, 0.3);
        // c1 ± t₀.₉₇₅,₁₈·SE (t = 2.10 for 19 replicates, as the text output's interval).
        var map = model.GetProperty("map");
        var (c1, c1Se) = (map.GetProperty("c1").GetDouble(), map.GetProperty("c1_se").GetDouble());
        Assert.InRange(1.0, c1 - (2.10 * c1Se), c1 + (2.10 * c1Se));
        Assert.Contains("onset-fold", Codes(model));
    }

    [Fact]
    public void TheClassTwoSystem_IsRejected()
    {
        var model = Compare(ClassTwo, "--start", "c0=50");
        Assert.False(model.GetProperty("consistent").GetBoolean());

        // Its cycle is born with a finite period: it cannot follow the slow firing just above onset.
        Assert.Contains("model-stops", Codes(model));
    }

    [Fact]
    public void AWrongClassOneSystem_IsRejected()
    {
        var model = Compare(PlanarSystemPiecesTests.MorrisLecarSystem(gCa: 4.4, phi: 0.1));
        Assert.False(model.GetProperty("consistent").GetBoolean());
    }
}

/// <summary>The sweeps of <see cref="PlanarComparisonTests"/>, written once to a temporary folder and removed afterwards.</summary>
public sealed class PlanarSweepFolder : IDisposable
{
    /// <summary>The manifest of the sweeps.</summary>
    public string Manifest { get; } = PlanarComparisonTests.WriteSweeps();

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path.GetDirectoryName(Manifest)!, recursive: true);
        }
        catch (IOException)
        {
            // A file still open elsewhere: the temporary folder is left to the system.
        }
    }
}
