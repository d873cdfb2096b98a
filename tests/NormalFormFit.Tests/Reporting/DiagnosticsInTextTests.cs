using System.Globalization;
using System.Net;
using System.Text;
using System.Text.RegularExpressions;
using NormalFormFit.Tests.Cli;
using NormalFormFit.Tests.Ingest;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// Every diagnostic the page shows is in the text summary too, in its one-line form (message and code), on every kind
/// of data: phase (the bundled stirrer demo), positions (the bundled tracker demo), event times, a single signal with
/// silent sweeps, and a mixed set. The pages and texts are those the CLI writes with <c>analyze --out</c>.
/// </summary>
public partial class DiagnosticsInTextTests
{
    public static TheoryData<string> DataSets => ["demo-stirrer", "demo-tracker", "events", "signal", "mixed"];

    [Theory]
    [MemberData(nameof(DataSets))]
    public void EveryDiagnosticOfThePage_IsInTheTextSummary(string dataSet)
    {
        using var files = new RecordingFiles();
        var manifest = dataSet switch
        {
            "demo-stirrer" or "demo-tracker" => Path.Combine(RepoRoot(), "datasets", dataSet, "manifest.csv"),
            "events" => WriteEvents(files),
            "signal" => WriteSignal(files),
            _ => MixedRunScenario.Write(files),
        };
        var outDir = Path.Combine(files.Folder, "report");
        var (code, _, err) = CliTestHost.Run("analyze", manifest, "--out", outDir, "--quiet");
        Assert.True(code == 0, err);
        var page = File.ReadAllText(Path.Combine(outDir, "report.html"));
        var text = File.ReadAllText(Path.Combine(outDir, "report.txt"));

        var shown = PageDiagnostic().Matches(page).Select(m => (
            File: m.Groups["file"].Success ? WebUtility.HtmlDecode(m.Groups["file"].Value) : null,
            Message: WebUtility.HtmlDecode(m.Groups["message"].Value).Trim(),
            Code: WebUtility.HtmlDecode(m.Groups["code"].Value))).ToList();
        Assert.NotEmpty(shown);
        var lines = text.Split('\n');
        foreach (var d in shown)
        {
            Assert.True(lines.Any(l => l.Contains($"{d.Message} ({d.Code})", StringComparison.Ordinal) && (d.File is null || l.Contains(d.File, StringComparison.Ordinal))),
                $"{dataSet}: the page's diagnostic '{d.Message} ({d.Code})'{(d.File is null ? string.Empty : " of " + d.File)} is not in the text summary");
        }

        // And the walk is not vacuous: as many diagnostic lines in the text's Diagnostics section as on the page.
        var section = text[text.IndexOf("\nDiagnostics\n", StringComparison.Ordinal)..];
        var textLines = section.Split('\n').Skip(2).TakeWhile(l => l.StartsWith("  ", StringComparison.Ordinal)).Count();
        Assert.Equal(shown.Count, textLines);
    }

    /// <summary>Spike times of the rotor θ̇ = μ − sin θ, period 2π/√(μ² − 1) (Adler 1946), 1% jitter; one run without events.</summary>
    internal static string WriteEvents(RecordingFiles files)
    {
        var rng = new Random(1603);
        foreach (var mu in new[] { 1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2 })
        {
            var period = 2 * Math.PI / Math.Sqrt((mu * mu) - 1);
            var t = 0.0;
            var times = Enumerable.Range(0, 14).Select(_ => t += period * (1 + (0.01 * ((2 * rng.NextDouble()) - 1)))).ToArray();
            files.AddRun($"spk_{mu:F2}.csv".Replace(',', '.'), mu, "spike_time", times);
        }

        File.WriteAllText(Path.Combine(files.Folder, "spk_0.99.csv"), "spike_time\n");
        var manifest = files.WriteManifest();
        File.AppendAllText(manifest, "spk_0.99.csv,0.99\n");
        return manifest;
    }

    /// <summary>
    /// Current-clamp-like sweeps: a resting level of −65 mV with 0.8 mV noise and, above onset (μ &gt; 1), a 95 mV spike
    /// once per period of the rotor θ̇ = μ − sin θ (period 2π/√(μ² − 1), Adler 1946); two silent sweeps below onset, and a
    /// gap of blank rows in each sweep.
    /// </summary>
    internal static string WriteSignal(RecordingFiles files)
    {
        var rng = new Random(1604);
        var manifest = new StringBuilder("file,I_app [pA]\n");
        foreach (var mu in new[] { 0.95, 0.98, 1.02, 1.04, 1.07, 1.1, 1.2 })
        {
            var period = mu > 1 ? 2 * Math.PI / Math.Sqrt((mu * mu) - 1) : double.PositiveInfinity;
            var sb = new StringBuilder("time_ms,Vm_mV\n");
            const double dt = 0.05;
            for (var i = 0; i < 16000; i++)
            {
                var t = i * dt;
                if (i is > 4000 and < 4020)
                {
                    sb.Append(t.ToString("R", CultureInfo.InvariantCulture)).Append(",\n");
                    continue;
                }

                var phase = double.IsFinite(period) ? (t / period) - Math.Floor(t / period) - 0.5 : 1.0;
                var v = -65 + (95 * Math.Exp(-(phase * phase) / (2 * 0.004 * 0.004 * 100))) + (0.8 * Gauss(rng));
                sb.Append(t.ToString("R", CultureInfo.InvariantCulture)).Append(',').Append(v.ToString("F2", CultureInfo.InvariantCulture)).Append('\n');
            }

            var name = "sweep_" + mu.ToString("F2", CultureInfo.InvariantCulture) + ".csv";
            File.WriteAllText(Path.Combine(files.Folder, name), sb.ToString());
            manifest.Append(name).Append(',').Append((100 * mu).ToString("R", CultureInfo.InvariantCulture)).Append('\n');
        }

        File.WriteAllText(files.ManifestPath, manifest.ToString());
        return files.ManifestPath;
    }

    private static double Gauss(Random rng) => Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());

    internal static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "NormalFormFit.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("repository root not found");
    }

    [GeneratedRegex("<li class=\"(?:error|warning|note)\"><span class=\"level\">[a-z]+</span> (?:<code>(?<file>[^<]*)</code>: )?(?<message>.*?) <span class=\"code\">\\((?<code>[^)]*)\\)</span></li>")]
    private static partial Regex PageDiagnostic();
}
