using System.Text.Json;

namespace NormalFormFit.Tests.Cli;

public class AnalyzeCommandTests
{
    private static string Simulate(CliTestHost.TempFolder dir, string pars, string model = "rotor")
    {
        var (code, _, err) = CliTestHost.Run("simulate", "--model", model, "--params", pars, "--out", dir.Path,
            "--noise", "0.01", "--revolutions", "5", "--dt", "0.02", "--seed", "5", "--quiet");
        Assert.True(code == 0, err);
        return dir.File("manifest.csv");
    }

    [Fact]
    public void Analyze_SimulatedRotorSet_WritesTheJsonContractAndExitsZero()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = Simulate(dir, "1.01,1.02,1.04,1.07,1.1,1.15");
        var json = dir.File("report.json");
        var (code, stdout, stderr) = CliTestHost.Run("analyze", manifest, "--json", json);
        Assert.True(code == 0, stderr);
        Assert.Contains("bottleneck route", stdout, StringComparison.Ordinal);

        using var doc = JsonDocument.Parse(File.ReadAllText(json));
        var root = doc.RootElement;
        foreach (var route in new[] { "from_bottleneck", "from_period" })
        {
            var o = root.GetProperty("onset").GetProperty(route);
            var v = o.GetProperty("value").GetDouble();
            Assert.InRange(v, 0.99, 1.01); // rotor onset μc = 1 (Adler 1946)
            Assert.True(o.GetProperty("ci95_low").GetDouble() <= v && v <= o.GetProperty("ci95_high").GetDouble());

            // Additive keys beside trend_degree: the law of the fitted curve.
            Assert.Contains(o.GetProperty("law").GetString(), new[] { "polynomial", "square-root-with-offset" });
            Assert.False(string.IsNullOrEmpty(o.GetProperty("law_description").GetString()));
        }

        // The recommended onset comes first in the onset section, and first in the text.
        var rec = root.GetProperty("onset").GetProperty("recommended");
        Assert.Equal("recommended", root.GetProperty("onset").EnumerateObject().First().Name);
        Assert.Contains(rec.GetProperty("basis").GetString(), new[] { "combined", "bottleneck", "period" });
        var rv = rec.GetProperty("value").GetDouble();
        Assert.InRange(rv, 0.99, 1.01);
        Assert.True(rec.GetProperty("ci95_low").GetDouble() <= rv && rv <= rec.GetProperty("ci95_high").GetDouble());
        Assert.True(rec.GetProperty("se").GetDouble() > 0);
        Assert.False(string.IsNullOrEmpty(rec.GetProperty("reason").GetString()));
        Assert.True(stdout.IndexOf("recommended:", StringComparison.Ordinal) < stdout.IndexOf("bottleneck route (a → 0)", StringComparison.Ordinal));

        Assert.Equal(JsonValueKind.Number, root.GetProperty("onset").GetProperty("agreement").GetProperty("z").ValueKind);
        Assert.True(root.GetProperty("onset").GetProperty("agreement").TryGetProperty("consistent", out _));
        foreach (var key in new[] { "exponent", "ci95_low", "ci95_high", "verdict" })
        {
            Assert.True(root.GetProperty("scaling").TryGetProperty(key, out _), key);
        }

        // Additive keys: the form of the scaling law and its offset T₀ (null for the log-T form).
        Assert.Contains(root.GetProperty("scaling").GetProperty("form").GetString(), new[] { "power-law", "power-law-with-offset", "power-law-of-quadratic-rate" });
        Assert.True(root.GetProperty("scaling").TryGetProperty("offset", out _));

        var run = root.GetProperty("runs")[0];
        Assert.Equal("run-00.csv", run.GetProperty("file").GetString());
        foreach (var key in new[] { "phase", "a", "a_se", "b", "b_se" })
        {
            Assert.True(run.GetProperty("bottleneck").TryGetProperty(key, out _), key);
        }

        foreach (var key in new[] { "measured", "measured_se", "from_bottleneck", "from_field", "revolutions" })
        {
            Assert.True(run.GetProperty("period").TryGetProperty(key, out _), key);
        }

        Assert.Equal("exact-spline", run.GetProperty("smoothing").GetProperty("smoother").GetString());
        Assert.True(run.GetProperty("smoothing").GetProperty("lambda").GetDouble() > 0);
        Assert.Equal(JsonValueKind.Array, run.GetProperty("flags").ValueKind);
        Assert.Equal(JsonValueKind.Array, root.GetProperty("diagnostics").ValueKind);
    }

    [Fact]
    public void Analyze_JsonToStandardOutput_PrintsOnlyJson()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = Simulate(dir, "0.01,0.02,0.04,0.08", "theta-neuron");
        var (code, stdout, _) = CliTestHost.Run("analyze", manifest, "--json", "-");
        Assert.Equal(0, code);
        using var doc = JsonDocument.Parse(stdout);
        Assert.InRange(doc.RootElement.GetProperty("onset").GetProperty("from_period").GetProperty("value").GetDouble(), -0.01, 0.01);
    }

    [Fact]
    public void Analyze_MissingManifest_ExitsTwoWithOneMessage()
    {
        var (code, stdout, stderr) = CliTestHost.Run("analyze", "/nonexistent/manifest.csv");
        Assert.Equal(2, code);
        Assert.Empty(stdout);
        Assert.Contains("/nonexistent/manifest.csv", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void Analyze_BadNumberInARunFile_NamesFileLineAndColumnAndExitsTwo()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = Simulate(dir, "1.02,1.05,1.1");
        var lines = File.ReadAllLines(dir.File("run-01.csv"));
        lines[4] = "0.06,zero";
        File.WriteAllLines(dir.File("run-01.csv"), lines);
        var json = dir.File("out.json");
        var (code, _, stderr) = CliTestHost.Run("analyze", manifest, "--json", json);
        Assert.Equal(2, code);
        Assert.Contains("run-01.csv:5:6: error:", stderr, StringComparison.Ordinal);
        Assert.False(File.Exists(json), "no report may be written when the input is bad");
    }

    [Fact]
    public void Analyze_FewerThanThreeTurningRuns_ExitsThree()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = Simulate(dir, "1.05,1.1");
        var (code, _, stderr) = CliTestHost.Run("analyze", manifest);
        Assert.Equal(3, code);
        Assert.Contains("at least 3", stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void Analyze_UnknownOption_IsAUsageErrorWithExitTwo()
    {
        var (code, _, stderr) = CliTestHost.Run("analyze", "m.csv", "--no-such-option");
        Assert.Equal(2, code);
        Assert.Contains("usage", stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void Analyze_DoesNotModifyItsInputs()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = Simulate(dir, "1.02,1.05,1.1");
        var before = Directory.GetFiles(dir.Path).ToDictionary(f => f, File.ReadAllBytes);
        _ = CliTestHost.Run("analyze", manifest, "--quiet");
        foreach (var (file, bytes) in before)
        {
            Assert.Equal(bytes, File.ReadAllBytes(file));
        }
    }
}
