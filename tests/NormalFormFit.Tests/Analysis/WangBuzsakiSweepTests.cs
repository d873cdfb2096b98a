using System.Globalization;
using System.Text;
using System.Text.Json;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Cli;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// A second published class-I cell, the Wang–Buzsáki interneuron (<see cref="WangBuzsaki"/>, Wang &amp; Buzsáki 1996),
/// as voltage sweeps (<c>time_ms,Vm_mV</c> at 20 kHz, one file per current, three silent sweeps, a noise current and
/// 0.3 mV of measurement noise), analysed through the command line.
/// </summary>
public class WangBuzsakiSweepTests(ITestOutputHelper output)
{
    // Distances from the onset (μA/cm²): three below (silent), seven above; nearest firing sweep 0.01.
    private static readonly double[] Offsets = [-0.06, -0.03, -0.01, 0.01, 0.02, 0.04, 0.07, 0.11, 0.16, 0.22];

    private const double Nearest = 0.01;
    private const double Step = 0.05;

    // The sweeps, simulated once for both recording kinds. Invented demo levels: a noise current of 0.02 μA/cm²·√ms
    // (measurement noise of 0.3 mV is added where the files are written); 4 s sweeps.
    private static readonly Lazy<double[][]> Voltages = new(() =>
    {
        var onset = WangBuzsaki.Standard.RestSaddleNode().Current;
        var voltages = new double[Offsets.Length][];
        Parallel.For(0, Offsets.Length, i => voltages[i] = WangBuzsaki.Standard.Sweep(onset + Offsets[i], 4000, Step, 0.02, 700 + i));
        return voltages;
    });

    [Fact]
    public void TheModelsOnset_IsTheKneeOfTheSteadyStateCurrentThatSciPyFinds()
    {
        // Reference: Reference/wang_buzsaki_knee.json, scipy.optimize.minimize_scalar (bounded, xatol 1e-10) on −I∞(V),
        // SciPy 1.10.1 (make_wang_buzsaki_knee_reference.py). The current agrees to rounding at a flat maximum; the
        // voltage to the minimisers' resolution of a flat top.
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "Reference", "wang_buzsaki_knee.json")));
        var (current, voltage) = WangBuzsaki.Standard.RestSaddleNode();
        Assert.InRange(Math.Abs(current - json.RootElement.GetProperty("onset_current_uA_per_cm2").GetDouble()), 0, 1e-9);
        Assert.InRange(Math.Abs(voltage - json.RootElement.GetProperty("knee_voltage_mV").GetDouble()), 0, 1e-3);
    }

    [Fact]
    public void VoltageSweeps_GiveTheOnsetByBothRoutes_AndSilentSweepsDoNotTurn()
    {
        var onset = WangBuzsaki.Standard.RestSaddleNode().Current;
        using var folder = CliTestHost.NewFolder();
        var manifest = new StringBuilder("file,I_app [uA/cm2]\n");
        var voltages = Voltages.Value;
        for (var i = 0; i < Offsets.Length; i++)
        {
            var measurement = GaussianSource.Create(700 + i, stream: 2);
            var name = $"wb_{i:00}.csv";
            var text = new StringBuilder("time_ms,Vm_mV\n");
            for (var k = 0; k < voltages[i].Length; k++)
            {
                text.Append(CultureInfo.InvariantCulture, $"{k * Step:F2},{voltages[i][k] + (0.3 * measurement.Next()):F3}\n");
            }

            File.WriteAllText(folder.File(name), text.ToString());
            manifest.Append(CultureInfo.InvariantCulture, $"{name},{onset + Offsets[i]:R}\n");
        }

        File.WriteAllText(folder.File("manifest.csv"), manifest.ToString());
        var (code, stdout, stderr) = CliTestHost.Run("analyze", folder.File("manifest.csv"), "--signal-protophase", "--json", folder.File("report.json"));
        output.WriteLine(stdout);
        output.WriteLine(stderr);
        Assert.Equal(0, code);
        var root = JsonDocument.Parse(File.ReadAllText(folder.File("report.json"))).RootElement;
        foreach (var route in new[] { "from_period", "from_bottleneck" })
        {
            var r = root.GetProperty("onset").GetProperty(route);
            output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"onset {onset:R}; {route} {r.GetProperty("value")} ± {r.GetProperty("se")} [{r.GetProperty("ci95_low")}, {r.GetProperty("ci95_high")}]"));
        }

        var runs = root.GetProperty("runs").EnumerateArray().ToList();
        for (var i = 0; i < runs.Count; i++)
        {
            if (Offsets[i] < 0)
            {
                Assert.Contains("not-turning", runs[i].GetProperty("flags").EnumerateArray().Select(f => f.GetString()));
            }
        }

        // Period route: within a small fraction of the distance to the nearest firing sweep, covering. Measured
        // (2026-12-03): 0.16121 ± 0.00062, 95% [0.15948, 0.16292] against the knee 0.160086 (0.0011 high, 11 % of 0.01).
        var period = root.GetProperty("onset").GetProperty("from_period");
        Assert.InRange(onset, period.GetProperty("ci95_low").GetDouble(), period.GetProperty("ci95_high").GetDouble());
        Assert.InRange(Math.Abs(period.GetProperty("value").GetDouble() - onset), 0, 0.2 * Nearest);

        // Bottleneck route from the protophase: covering, but not yet a small fraction. Measured: 0.1646 ± 0.0098,
        // 95% [0.1357, 0.1871] (0.0045 high, 45 % of 0.01). Open gap: the two runs nearest onset are noise-dominated
        // and two others give a < 0 (the spike is 1 ms wide, the delay 0.3 ms, and the slow stretch is short on the
        // mean orbit), so the straight line misfits (χ²/dof 136).
        var bottleneck = root.GetProperty("onset").GetProperty("from_bottleneck");
        Assert.InRange(onset, bottleneck.GetProperty("ci95_low").GetDouble(), bottleneck.GetProperty("ci95_high").GetDouble());
        Assert.InRange(Math.Abs(bottleneck.GetProperty("value").GetDouble() - onset), 0, 0.6 * Nearest);

        // Kind of onset: a saddle-node on the circle (Wang & Buzsáki 1996 built the cell to be class I; from memory). The
        // square-root law is decisively the best of the period laws and the minimum speed closes, while β = 0.643
        // [0.612, 0.675] (measured) excludes ½ (the sweeps reach 0.22 above an onset of 0.16, where the period is no
        // longer the leading-order law): within OnsetKindDecision.NearHalfMargin of ½, so the verdict is given with
        // that reservation in the evidence.
        var scaling = root.GetProperty("scaling");
        Assert.Equal("saddle-node-on-circle", scaling.GetProperty("verdict").GetString());
        Assert.Contains("though its interval excludes ½", scaling.GetProperty("evidence").GetString(), StringComparison.Ordinal);
        Assert.Contains("period-law weights: saddle-node 1.00", scaling.GetProperty("evidence").GetString(), StringComparison.Ordinal);

        // A class-I cell: the periods show no finite rate at onset (FiniteRateAtOnset; measured rate ratio 0.16 against
        // the bound 0.30 of a square-root onset), so the evidence does not say "not a saddle-node".
        Assert.DoesNotContain("not a saddle-node", scaling.GetProperty("evidence").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public void SpikeTimeFiles_WithHeaderOnlyFilesForSilentSweeps_GiveTheOnsetByThePeriodRoute()
    {
        // The same sweeps as spike times: one file per sweep, a header and one time per line; silent sweeps are files
        // with the header only. Sources: the model of Wang & Buzsáki 1996 (J. Neurosci. 16:6402; WangBuzsaki.Standard),
        // its onset the knee of I∞(V) that SciPy finds (Reference/wang_buzsaki_knee.json, SciPy 1.10.1,
        // make_wang_buzsaki_knee_reference.py), spike times by a rule written here, independently of nffit's detector:
        // upward crossings of −20 mV after the voltage fell below −50 mV, linearly interpolated (common practice, no
        // source).
        var onset = WangBuzsaki.Standard.RestSaddleNode().Current;
        using var folder = CliTestHost.NewFolder();
        var manifest = new StringBuilder("file,I_app [uA/cm2]\n");
        var voltages = Voltages.Value;
        for (var i = 0; i < Offsets.Length; i++)
        {
            var measurement = GaussianSource.Create(700 + i, stream: 2);
            var name = $"wb_spikes_{i:00}.csv";
            var text = new StringBuilder("spike_time_ms\n");
            var armed = false;
            var previous = double.NaN;
            for (var k = 0; k < voltages[i].Length; k++)
            {
                var v = voltages[i][k] + (0.3 * measurement.Next());
                armed |= v < -50;
                if (armed && k > 0 && previous < -20 && v >= -20)
                {
                    text.Append(CultureInfo.InvariantCulture, $"{(k - 1 + ((-20 - previous) / (v - previous))) * Step:F4}\n");
                    armed = false;
                }

                previous = v;
            }

            File.WriteAllText(folder.File(name), text.ToString());
            manifest.Append(CultureInfo.InvariantCulture, $"{name},{onset + Offsets[i]:R}\n");
        }

        File.WriteAllText(folder.File("manifest.csv"), manifest.ToString());
        var (code, stdout, stderr) = CliTestHost.Run("analyze", folder.File("manifest.csv"), "--json", folder.File("report.json"));
        output.WriteLine(stdout);
        output.WriteLine(stderr);
        Assert.Equal(0, code);
        var root = JsonDocument.Parse(File.ReadAllText(folder.File("report.json"))).RootElement;

        // Silent sweeps are header-only files: runs that do not turn, kept in the table.
        var runs = root.GetProperty("runs").EnumerateArray().ToList();
        Assert.Equal(Offsets.Length, runs.Count);
        for (var i = 0; i < runs.Count; i++)
        {
            if (Offsets[i] < 0)
            {
                Assert.Contains("not-turning", runs[i].GetProperty("flags").EnumerateArray().Select(f => f.GetString()));
            }
        }

        // The period route within the tolerance of the voltage files (a fifth of the distance to the nearest firing
        // sweep), covering the knee.
        var period = root.GetProperty("onset").GetProperty("from_period");
        output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"onset {onset:R}; from_period {period.GetProperty("value")} ± {period.GetProperty("se")} [{period.GetProperty("ci95_low")}, {period.GetProperty("ci95_high")}]"));
        Assert.InRange(onset, period.GetProperty("ci95_low").GetDouble(), period.GetProperty("ci95_high").GetDouble());
        Assert.InRange(Math.Abs(period.GetProperty("value").GetDouble() - onset), 0, 0.2 * Nearest);
    }
}
