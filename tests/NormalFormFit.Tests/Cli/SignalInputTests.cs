using System.Globalization;
using System.Text;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// Single-signal and spike-time files at the command line: silent sweeps are runs that do not turn, never errors;
/// signals that cannot give events are refused with one message and the documented exit code, nothing written.
/// </summary>
public class SignalInputTests
{
    // A spike train written as event times: regular intervals T = 1/√(μ − 1) (an invented square-root law for demo data).
    private static string Spikes(double mu)
    {
        var sb = new StringBuilder("spike_time_ms\n");
        var period = 1 / Math.Sqrt(mu - 1);
        for (var k = 0; k < 40; k++)
        {
            sb.Append(CultureInfo.InvariantCulture, $"{k * period * (1 + (0.01 * Math.Sin(k * 1.7))):R}\n");
        }

        return sb.ToString();
    }

    [Fact]
    public void HeaderOnlySpikeFiles_AreRunsThatDoNotTurn_EvenWhenAlikeByteForByte()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = new StringBuilder("file,I_app [pA]\n");
        double[] mus = [0.8, 0.9, 1.1, 1.2, 1.4, 1.7, 2.0];
        foreach (var mu in mus)
        {
            var name = string.Create(CultureInfo.InvariantCulture, $"spikes_{mu:F1}.csv");
            File.WriteAllText(dir.File(name), mu < 1 ? "spike_time_ms\n" : Spikes(mu));
            manifest.Append(CultureInfo.InvariantCulture, $"{name},{mu:R}\n");
        }

        File.WriteAllText(dir.File("manifest.csv"), manifest.ToString());
        var (code, stdout, stderr) = CliTestHost.Run("analyze", dir.File("manifest.csv"), "--json", dir.File("report.json"));
        Assert.True(code == 0, stderr);
        Assert.DoesNotContain("same-data", stderr, StringComparison.Ordinal);
        using var doc = System.Text.Json.JsonDocument.Parse(File.ReadAllText(dir.File("report.json")));
        var runs = doc.RootElement.GetProperty("runs").EnumerateArray().ToList();
        Assert.Equal(mus.Length, runs.Count);
        foreach (var r in runs.Take(2))
        {
            Assert.Equal(System.Text.Json.JsonValueKind.Null, r.GetProperty("period").GetProperty("measured").ValueKind);
            Assert.Contains("not-turning", r.GetProperty("flags").EnumerateArray().Select(f => f.GetString()));
        }

        Assert.Contains("periods-only", stdout, StringComparison.Ordinal);
    }

    [Fact]
    public void AConstantSignal_IsRefusedWithExitCodeTwo_NamingFileAndColumn()
    {
        using var dir = CliTestHost.NewFolder();
        var sb = new StringBuilder("time_ms,Vm_mV\n");
        for (var k = 0; k < 200; k++)
        {
            sb.Append(CultureInfo.InvariantCulture, $"{k * 0.05:F2},-65.0\n");
        }

        File.WriteAllText(dir.File("flat.csv"), sb.ToString());
        File.WriteAllText(dir.File("manifest.csv"), "file,I\nflat.csv,1\n");
        var (code, _, stderr) = CliTestHost.Run("analyze", dir.File("manifest.csv"), "--json", dir.File("report.json"));
        Assert.Equal(2, code);
        Assert.Contains("flat.csv: error: column 'Vm_mV' is constant (-65)", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", stderr, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("report.json")));
    }

    // A sweep at -65 mV with 1 mV of white measurement noise (invented demo levels), 20 kHz, 250 ms; with spikes of
    // 90 mV and 1 ms every `interval` ms when interval > 0, and `pulses` lone two-sample pulses of 40 mV (pick-up glitches).
    private static string Sweep(int seed, double interval, int pulses = 0)
    {
        var random = new Random(seed);
        var sb = new StringBuilder("time_ms,Vm_mV\n");
        for (var k = 0; k < 5000; k++)
        {
            var t = k * 0.05;
            var g = Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            var v = -65 + g;
            if (interval > 0 && (t % interval) < 1)
            {
                v += 90 * Math.Sin(Math.PI * (t % interval));
            }

            if (pulses > 0 && k % (5000 / pulses) is 100 or 101)
            {
                v += 40;
            }

            sb.Append(CultureInfo.InvariantCulture, $"{t:F2},{v:F3}\n");
        }

        return sb.ToString();
    }

    [Fact]
    public void ASetWhoseSignalsAreAllNoise_IsRefusedWithExitCodeTwo_NamingFilesAndColumn_AndNothingIsWritten()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = new StringBuilder("file,I\n");
        for (var i = 0; i < 4; i++)
        {
            // One file also carries two lone pick-up pulses: two "events" are no population (three are needed for a period).
            File.WriteAllText(dir.File($"noise{i}.csv"), Sweep(40 + i, 0, pulses: i == 3 ? 2 : 0));
            manifest.Append(CultureInfo.InvariantCulture, $"noise{i}.csv,{i + 1}\n");
        }

        File.WriteAllText(dir.File("manifest.csv"), manifest.ToString());
        var (code, stdout, stderr) = CliTestHost.Run("analyze", dir.File("manifest.csv"), "--json", dir.File("report.json"));
        Assert.Equal(2, code);
        Assert.Contains("none of the 4 signal runs (noise0.csv, noise1.csv, noise2.csv and 1 more) has a population of events in column 'Vm_mV'", stderr, StringComparison.Ordinal);
        Assert.Contains("--signal-column", stderr, StringComparison.Ordinal);
        Assert.Contains("--event-threshold", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", stderr, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("report.json")));
    }

    [Fact]
    public void SilentSweeps_InASetWithFiringSweeps_AreRunsThatDoNotTurn_NotAnAllNoiseRefusal()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = new StringBuilder("file,I\n");
        double[] intervals = [0, 0, 40, 30, 22, 16, 12];
        for (var i = 0; i < intervals.Length; i++)
        {
            File.WriteAllText(dir.File($"sweep{i}.csv"), Sweep(60 + i, intervals[i]));
            manifest.Append(CultureInfo.InvariantCulture, $"sweep{i}.csv,{i + 1}\n");
        }

        File.WriteAllText(dir.File("manifest.csv"), manifest.ToString());
        var (code, _, stderr) = CliTestHost.Run("analyze", dir.File("manifest.csv"), "--json", dir.File("report.json"));
        Assert.True(code == 0, stderr);
        Assert.DoesNotContain("signal-all-noise", stderr, StringComparison.Ordinal);
        using var doc = System.Text.Json.JsonDocument.Parse(File.ReadAllText(dir.File("report.json")));
        var runs = doc.RootElement.GetProperty("runs").EnumerateArray().ToList();
        foreach (var r in runs.Take(2))
        {
            Assert.Equal(0, r.GetProperty("events").GetProperty("count").GetInt32());
            Assert.Contains("not-turning", r.GetProperty("flags").EnumerateArray().Select(f => f.GetString()));
        }

        Assert.All(runs.Skip(2), r => Assert.Equal(System.Text.Json.JsonValueKind.Number, r.GetProperty("period").GetProperty("measured").ValueKind));
    }

    [Fact]
    public void ANegativeRefractoryTime_IsAUsageError()
    {
        using var dir = CliTestHost.NewFolder();
        File.WriteAllText(dir.File("manifest.csv"), "file,I\nx.csv,1\n");
        var (code, _, stderr) = CliTestHost.Run("analyze", dir.File("manifest.csv"), "--refractory-time", "-1");
        Assert.Equal(2, code);
        Assert.Contains("refractory time must be zero or a positive number", stderr, StringComparison.Ordinal);
    }
}
