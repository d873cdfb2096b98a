using System.Globalization;
using System.Text;
using System.Text.Json;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Cli;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// Current-clamp sweeps of a class-II cell, the Hodgkin–Huxley model (<see cref="HodgkinHuxley"/>, Hodgkin &amp;
/// Huxley 1952, standard parameters), as a neuroscientist records them (<c>time_ms,Vm_mV</c> at 20 kHz, one file per
/// current, a silent sweep below threshold), analysed through the command line without options. Repetitive firing in
/// this model starts at a finite rate (class II, Hodgkin 1948, J. Physiol. 107:165; onset near 6 μA/cm² at about
/// 50–60 spikes/s — from memory), so the verdict must not be a saddle-node on the circle.
/// </summary>
public class ClassTwoSweepTests(ITestOutputHelper output)
{
    // μA/cm²: 3 is silent; 5–8 lie where rest and firing coexist (the noise current makes sweeps start or stop firing).
    private static readonly double[] Currents = [3, 5, 6, 6.5, 7, 8, 10, 13, 17, 22, 30];

    // Invented demo levels: a noise current of 0.5 μA/cm²·√ms, 0.3 mV of measurement noise; 2 s sweeps at 20 kHz.
    private const double Step = 0.05;

    [Fact]
    public void HodgkinHuxleySweeps_AreNotJudgedASaddleNodeOnTheCircle_AndTheSilentSweepDoesNotTurn()
    {
        using var folder = CliTestHost.NewFolder();
        var manifest = new StringBuilder("file,I_app [uA/cm2]\n");
        var voltages = new double[Currents.Length][];
        Parallel.For(0, Currents.Length, i => voltages[i] = HodgkinHuxley.Standard.Sweep(Currents[i], 2000, Step, 0.5, 500 + i));
        for (var i = 0; i < Currents.Length; i++)
        {
            var measurement = GaussianSource.Create(500 + i, stream: 2);
            var name = $"hh_{i:00}.csv";
            var text = new StringBuilder("time_ms,Vm_mV\n");
            for (var k = 0; k < voltages[i].Length; k++)
            {
                text.Append(CultureInfo.InvariantCulture, $"{k * Step:F2},{voltages[i][k] + (0.3 * measurement.Next()):F3}\n");
            }

            File.WriteAllText(folder.File(name), text.ToString());
            manifest.Append(CultureInfo.InvariantCulture, $"{name},{Currents[i]:R}\n");
        }

        File.WriteAllText(folder.File("manifest.csv"), manifest.ToString());
        var (code, stdout, stderr) = CliTestHost.Run("analyze", folder.File("manifest.csv"), "--json", folder.File("report.json"));
        output.WriteLine(stdout);
        output.WriteLine(stderr);
        Assert.Equal(0, code);
        var root = JsonDocument.Parse(File.ReadAllText(folder.File("report.json"))).RootElement;

        // The simulated cell fires at a finite rate just above its onset: the lowest current with a steady train
        // (ten or more intervals) has a period under 25 ms (above 40 spikes/s), not a diverging one.
        var runs = root.GetProperty("runs").EnumerateArray().ToList();
        var firstSteady = runs.First(r => r.GetProperty("period").GetProperty("revolutions").GetInt32() >= 10);
        Assert.InRange(firstSteady.GetProperty("period").GetProperty("measured").GetDouble(), 10, 25);

        // The silent sweep is kept and does not turn.
        Assert.Contains("not-turning", runs[0].GetProperty("flags").EnumerateArray().Select(f => f.GetString()));

        // The verdict is not a saddle-node on the circle. Measured (2026-12-03): "undetermined", period-law weights
        // saddle-node 0.50, homoclinic 0.48, finite period 0.03, β = 0.31 [0.29, 0.33]; the decision lives in
        // Scaling/OnsetKindDecision (not changed here).
        var verdict = root.GetProperty("scaling").GetProperty("verdict").GetString();
        Assert.NotEqual("saddle-node-on-circle", verdict);
        Assert.DoesNotContain("kind of onset:             saddle-node", stdout, StringComparison.Ordinal);

        // And the summary says so in words (FiniteRateAtOnset): the lowest steadily firing run already fires at a rate
        // that no square-root onset above the silent run allows. Measured (2026-12-03): the run at 7 μA/cm² (period
        // 16.9 ms, 32 intervals) fires at 0.60 ± 0.01 of the rate at 30 μA/cm², against at most 0.38 for a rate growing like
        // √(μ − μc) above 3 μA/cm².
        var evidence = root.GetProperty("scaling").GetProperty("evidence").GetString();
        Assert.Contains("not a saddle-node on the circle", evidence, StringComparison.Ordinal);
        Assert.Contains("the rate jumps from zero to a finite value at onset (class II", evidence, StringComparison.Ordinal);
        Assert.Contains("not a saddle-node on the circle", stdout, StringComparison.Ordinal);
    }
}
