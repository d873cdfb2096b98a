using System.Globalization;
using System.Text;
using System.Text.Json;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// <c>compare</c> as a modeller uses it on recordings: it reads runs as <c>analyze</c> does (every reading option),
/// refuses models it cannot check with exit 2 and a hint, never reports a non-finite answer, states the turning sense
/// and carries the caution. Invented demo scenario: rotor runs θ̇ = μ − sin θ simulated by <c>nffit simulate</c>.
/// </summary>
public sealed class CompareCommandTests : IDisposable
{
    private readonly string dir = Directory.CreateTempSubdirectory("nffit-compare-").FullName;

    public CompareCommandTests()
    {
        var (code, _, err) = CliTestHost.Run("simulate", "--params", "1.05,1.1,1.2,1.35", "--revolutions", "6", "--dt", "0.02",
            "--noise", "0.01", "--out", Path.Combine(dir, "data"), "--quiet");
        Assert.True(code == 0, err);
    }

    private string Manifest => Path.Combine(dir, "data", "manifest.csv");

    public void Dispose() => Directory.Delete(dir, recursive: true);

    [Fact]
    public void Compare_TakesAnalyzesReadingOptions_ForColumnsItWouldNotRecognise()
    {
        // The same runs with columns named in another language and the phase in degrees: analyze's options name them.
        var folder = Path.Combine(dir, "renamed");
        Directory.CreateDirectory(folder);
        var manifest = new StringBuilder("file,param\n");
        foreach (var line in File.ReadAllLines(Manifest).Skip(1))
        {
            var cells = line.Split(',');
            var rows = File.ReadAllLines(Path.Combine(dir, "data", cells[0])).Skip(1)
                .Select(r => r.Split(',')).Select(c => string.Create(CultureInfo.InvariantCulture, $"{c[0]};{double.Parse(c[1], CultureInfo.InvariantCulture) * 180 / Math.PI:R}"));
            File.WriteAllLines(Path.Combine(folder, cells[0]), ["zeit;winkel", .. rows]);
            manifest.Append(cells[0]).Append(',').Append(cells[1]).Append('\n');
        }

        File.WriteAllText(Path.Combine(folder, "manifest.csv"), manifest.ToString());

        var (refused, _, _) = CliTestHost.Run("compare", Path.Combine(folder, "manifest.csv"), "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0");
        Assert.Equal(2, refused);

        var (code, json, err) = CliTestHost.Run("compare", Path.Combine(folder, "manifest.csv"), "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0",
            "--time-column", "zeit", "--phase-column", "winkel", "--phase-unit", "degrees", "--delimiter", "semicolon", "--json", "-");
        Assert.True(code == 0, err);
        var (_, plain, _) = CliTestHost.Run("compare", Manifest, "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0", "--json", "-");

        // Same runs, read through the options: the same fitted a within a fraction of its standard error (the degree
        // conversion moves the last bits of every phase, and the smoothing's choice of λ with them).
        var (a, se) = A(plain);
        Assert.InRange(A(json).Value, a - (0.5 * se), a + (0.5 * se));
    }

    private static (double Value, double Se) A(string json)
    {
        using var doc = JsonDocument.Parse(json);
        var a = doc.RootElement.GetProperty("model").GetProperty("parameters")[0];
        return (a.GetProperty("value").GetDouble(), a.GetProperty("se").GetDouble());
    }

    [Theory]
    [InlineData("mu - a*sin(phi)", "does not use the phase 'theta'", "'phi' would be fitted as a constant")]
    [InlineData("mu - a", "does not use the phase 'theta'", "e.g. mu - a*sin(theta)")]
    [InlineData("I - a*sin(theta)", "does not use the control parameter 'mu'", "'I' would be fitted as a constant")]
    [InlineData("a - sin(theta)", "does not use the control parameter 'mu'", "e.g. mu - a*sin(theta)")]
    [InlineData("mu - a*sin(theta)**2", "'**' is not an operator here", "'^'")]
    public void Compare_RefusesAModelItCannotCheck_WithExitTwoAndAHint(string model, string what, string hint)
    {
        var (code, stdout, stderr) = CliTestHost.Run("compare", Manifest, "--model", model);
        Assert.Equal(2, code);
        Assert.Contains(what, stderr, StringComparison.Ordinal);
        Assert.Contains(hint, stderr, StringComparison.Ordinal);
        Assert.Equal(string.Empty, stdout);
    }

    [Fact]
    public void Compare_PointsAtTheLookAlikeName_WithACaret()
    {
        var (_, _, stderr) = CliTestHost.Run("compare", Manifest, "--model", "mu - a*sin(phi)");
        var lines = stderr.Split('\n');
        var expression = Array.FindIndex(lines, l => l.EndsWith("mu - a*sin(phi)", StringComparison.Ordinal));
        Assert.True(expression >= 0, stderr);
        Assert.Equal(lines[expression].IndexOf("phi", StringComparison.Ordinal), lines[expression + 1].IndexOf('^', StringComparison.Ordinal));
    }

    [Fact]
    public void Compare_AcceptsTheMapsC0AndC1_InStartAndFix()
    {
        var (code, json, err) = CliTestHost.Run("compare", Manifest, "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0",
            "--start", "c1=6,c0=0", "--fix", "c0=0", "--json", "-");
        Assert.True(code == 0, err);
        using var doc = JsonDocument.Parse(json);
        var map = doc.RootElement.GetProperty("model").GetProperty("map");
        Assert.Equal(0.0, map.GetProperty("c0").GetDouble());

        // Simulated with μ_model = μ_lab: the scale found from a start at 6.
        Assert.Equal(1.0, map.GetProperty("c1").GetDouble(), 1);

        var (clash, _, clashErr) = CliTestHost.Run("compare", Manifest, "--model", "mu - a*sin(theta)", "--fix", "c1=1", "--c1", "2");
        Assert.Equal(2, clash);
        Assert.Contains("disagree", clashErr, StringComparison.Ordinal);
    }

    [Fact]
    public void Compare_StatesTheTurningSense_AndCarriesTheCaution_InTextAndJson()
    {
        var (code, text, err) = CliTestHost.Run("compare", Manifest, "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0");
        Assert.True(code == 0, err);
        Assert.Contains("turning sense  the phase increases in every run", text, StringComparison.Ordinal);
        Assert.Contains("Caution:", text, StringComparison.Ordinal);

        var (_, json, _) = CliTestHost.Run("compare", Manifest, "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0", "--json", "-");
        using var doc = JsonDocument.Parse(json);
        var model = doc.RootElement.GetProperty("model");
        Assert.Equal("forward", model.GetProperty("turning_sense").GetString());
        Assert.StartsWith("Caution:", model.GetProperty("caution").GetString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Compare_OnRunsWhosePhaseDecreases_SaysSo_AndFitsTheTrueFormWithTheSignOfTheFile()
    {
        // The same runs with the phase negated (a recording whose axes turn the other way): θ̇_file = −μ + sin(−θ_file)·(−1).
        var folder = Path.Combine(dir, "mirrored");
        Directory.CreateDirectory(folder);
        foreach (var file in Directory.GetFiles(Path.Combine(dir, "data"), "*.csv"))
        {
            var lines = File.ReadAllLines(file);
            File.WriteAllLines(Path.Combine(folder, Path.GetFileName(file)), Path.GetFileName(file) == "manifest.csv" ? lines
                : [lines[0], .. lines.Skip(1).Select(l => l.Split(',')).Select(c => string.Create(CultureInfo.InvariantCulture, $"{c[0]},{-double.Parse(c[1], CultureInfo.InvariantCulture):R}"))]);
        }

        var (code, json, err) = CliTestHost.Run("compare", Path.Combine(folder, "manifest.csv"), "--model", "mu - a*sin(theta)", "--replicates", "19", "--pilot", "0", "--json", "-");
        Assert.True(code == 0, err);
        using var doc = JsonDocument.Parse(json);
        var model = doc.RootElement.GetProperty("model");
        Assert.Equal("backward", model.GetProperty("turning_sense").GetString());
        Assert.Contains(model.GetProperty("diagnostics").EnumerateArray(), d => d.GetProperty("code").GetString() == "backward-sense");

        // In the file's convention the model is θ̇ = −(μ − sin(−θ)) = −μ − sin θ: the map reverses (c1 ≈ −1) and a stays 1.
        Assert.Equal(-1.0, model.GetProperty("map").GetProperty("c1").GetDouble(), 1);
        Assert.Equal(1.0, model.GetProperty("parameters")[0].GetProperty("value").GetDouble(), 1);
    }
}
