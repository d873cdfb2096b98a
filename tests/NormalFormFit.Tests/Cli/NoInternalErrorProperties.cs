using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// docs/data-safety.md, clause 7: exit code 70 means a bug, so no option value and no file content may produce it.
/// FsCheck (3.6) draws the values; every property asserts only "not 70" (and, for outputs, that the inputs are unchanged).
/// </summary>
public sealed class NoInternalErrorProperties : IDisposable
{
    private readonly string dir = Directory.CreateTempSubdirectory("nffit-props-").FullName;

    public NoInternalErrorProperties()
    {
        // Invented demo scenario: three short rotor runs.
        var (code, _, err) = CliTestHost.Run("simulate", "--params", "1.05,1.1,1.2", "--revolutions", "4", "--dt", "0.05", "--out", Data, "--quiet");
        Assert.True(code == 0, err);
    }

    private string Data => Path.Combine(dir, "data");

    public void Dispose() => Directory.Delete(dir, recursive: true);

    private static string Text(string? s) => s ?? string.Empty;

    [Property(MaxTest = 60)]
    public bool Simulate_AnyNumericOptions_NeverExitSeventy(double dt, int revolutions, double noise, double diffusion, int seed, double mu)
    {
        // A valid but heavy run (many samples) is not what this property is about: it would only take long.
        var inRange = dt is >= 1e-6 and <= 100 && revolutions is >= 1 and <= 1_000_000;
        if (inRange && revolutions / dt > 2e5)
        {
            return true;
        }

        var muText = double.IsFinite(mu) && Math.Abs(mu) < 1.05 ? "1.5" : mu.ToString("R", System.Globalization.CultureInfo.InvariantCulture);
        var ic = System.Globalization.CultureInfo.InvariantCulture;
        var (code, _, _) = CliTestHost.Run("simulate", "--params", muText, "--dt", dt.ToString("R", ic), "--revolutions", revolutions.ToString(ic),
            "--noise", noise.ToString("R", ic), "--diffusion", diffusion.ToString("R", ic), "--seed", seed.ToString(ic), "--out", Path.Combine(dir, "sim-" + Guid.NewGuid().ToString("N")), "--quiet");
        return code != 70;
    }

    [Property(MaxTest = 60)]
    public bool Simulate_AnyTextOptions_NeverExitSeventy(string model, string set, string pars, string dt)
    {
        var (code, _, _) = CliTestHost.Run("simulate", "--model", Text(model), "--set", Text(set), "--params", Text(pars), "--dt", Text(dt),
            "--revolutions", "2", "--out", Path.Combine(dir, "sim-" + Guid.NewGuid().ToString("N")), "--quiet");
        return code != 70;
    }

    [Property(MaxTest = 40)]
    public bool Analyze_AnyOptionValues_NeverExitSeventy(string timeColumn, string phaseColumn, string eventColumn, int threads, string json)
    {
        var kinds = new[] { "auto", "phase", "positions", "events" };
        var kind = kinds[Math.Abs(threads % kinds.Length)];
        var (code, _, _) = CliTestHost.Run("analyze", Path.Combine(Data, "manifest.csv"), "--time-column", Text(timeColumn), "--phase-column", Text(phaseColumn),
            "--event-column", Text(eventColumn), "--kind", kind, "--threads", threads.ToString(System.Globalization.CultureInfo.InvariantCulture),
            "--json", Path.Combine(dir, "j-" + Math.Abs(Text(json).GetHashCode(StringComparison.Ordinal)) + ".json"), "--quiet");
        return code != 70;
    }

    [Property(MaxTest = 60)]
    public bool Analyze_AnyManifestAndRunFileContent_NeverExitSeventy(string manifestTail, string runText)
    {
        var folder = Path.Combine(dir, "case-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(folder);
        File.WriteAllText(Path.Combine(folder, "run.csv"), Text(runText));
        File.WriteAllText(Path.Combine(folder, "m.csv"), "file,param\nrun.csv,1\n" + Text(manifestTail));
        var (code, _, _) = CliTestHost.Run("analyze", Path.Combine(folder, "m.csv"), "--quiet");
        return code != 70;
    }

    [Property(MaxTest = 60)]
    public bool Combine_AnyFileContent_NeverExitSeventy(string content, bool asRunLine)
    {
        var file = Path.Combine(dir, "lines-" + Guid.NewGuid().ToString("N") + ".jsonl");
        File.WriteAllText(file, asRunLine ? "{\"schema\":\"nffit-run/2\"," + Text(content) + "}\n" : Text(content));
        var (code, _, _) = CliTestHost.Run("combine", file, "--quiet");
        return code != 70;
    }

    [Property(MaxTest = 40)]
    public bool Compare_AnyModelAndOptionValues_NeverExitSeventy(string model, string start, string fix, int replicates, int pilot)
    {
        // A manifest whose runs do not exist: the options and the model are checked, the slow comparison is not reached.
        var manifest = Path.Combine(dir, "missing-runs.csv");
        File.WriteAllText(manifest, "file,param\nnone-0.csv,1\nnone-1.csv,2\nnone-2.csv,3\n");
        var ic = System.Globalization.CultureInfo.InvariantCulture;
        var (code, _, _) = CliTestHost.Run("compare", manifest, "--model", Text(model), "--start", Text(start), "--fix", Text(fix),
            "--replicates", replicates.ToString(ic), "--pilot", pilot.ToString(ic));
        return code != 70;
    }

    [Property(MaxTest = 30)]
    public Property Combine_AnyArgumentList_NeverExitSeventy() =>
        Prop.ForAll(Gen.ArrayOf(Gen.Elements("--json", "--quiet", "--verbose", "-", "", "@x", "/dev/null", "/dev/zero", dir)).ToArbitrary(),
            args => CliTestHost.Run(["combine", .. args]).Code != 70);
}
