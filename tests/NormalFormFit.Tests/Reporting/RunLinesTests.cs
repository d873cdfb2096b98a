using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using NormalFormFit.Analysis;
using NormalFormFit.Reporting;
using NormalFormFit.Tests.Cli;
using NormalFormFit.Tests.Ingest;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// Run lines and the JSON report follow one convention: snake_case keys, non-finite numbers as null (read back as NaN).
/// Reading old files is checked by the golden tests (GoldenOutputTests, files of layout nffit-run/1).
/// </summary>
public sealed partial class RunLinesTests : IDisposable
{
    private readonly string folder = Directory.CreateTempSubdirectory("nffit-runlines-").FullName;

    public void Dispose() => Directory.Delete(folder, recursive: true);

    [Fact]
    public void NonFiniteNumbers_AreWrittenAsNull_AndReadBackAsNaN()
    {
        var run = new RunResult("a.csv", 1.5, null, 10, double.PositiveInfinity, double.NaN, 1, null, null, null, null, [RunFlag.NotTurning], []);

        var text = WriteLines(run);
        var back = Assert.Single(RunLines.Read([Save(text)]).Value!.Runs);

        Assert.Contains("\"duration\":null,\"turns\":null", text, StringComparison.Ordinal);
        Assert.DoesNotContain("NaN", text, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", text, StringComparison.Ordinal);
        Assert.True(double.IsNaN(back.Duration));
        Assert.True(double.IsNaN(back.Turns));
        Assert.Equal((1.5, 10), (back.Param, back.Samples));
    }

    [Fact]
    public void RunLinesAndReport_OfEveryKindOfRun_UseSnakeCaseKeysAndNoNumberAsText()
    {
        using var files = new RecordingFiles();
        var manifest = MixedRunScenario.Write(files);
        var lines = Path.Combine(folder, "runs.jsonl");
        var (code, report, err) = CliTestHost.Run("analyze", manifest, "--runs-only", lines, "--quiet");
        Assert.True(code == 0, err);
        (code, report, err) = CliTestHost.Run("analyze", manifest, "--json", "-");
        Assert.True(code == 0, err);

        var documents = File.ReadAllLines(lines).Append(report).ToList();
        var keys = documents.SelectMany(d => Keys(JsonDocument.Parse(d).RootElement)).Distinct().ToList();
        Assert.Contains("orbit", keys);
        Assert.Contains("relaxation", keys);
        Assert.Contains("diffusion_se", keys);
        Assert.All(keys, k => Assert.Matches(SnakeCase(), k));
        Assert.All(documents, d => Assert.DoesNotMatch(NumberAsText(), d));
    }

    [Fact]
    public void Line_OfAnUnknownLayout_IsRefusedNamingFileAndLine()
    {
        var text = WriteLines(Resting()).Replace(RunLines.Schema, "nffit-run/9", StringComparison.Ordinal);
        var path = Save("\n" + text);

        var error = Assert.Single(RunLines.Read([path]).Diagnostics);

        Assert.Equal(("bad-run-line", path, 2), (error.Code, error.File, error.Line));
        Assert.Contains("layout", error.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Line_WithoutARequiredField_IsRefusedNamingTheField()
    {
        var text = Regex.Replace(WriteLines(Resting()), "\"samples\":[0-9]+,", string.Empty);
        var path = Save(text);

        var error = Assert.Single(RunLines.Read([path]).Diagnostics);

        Assert.Equal(("bad-run-line", path, 1), (error.Code, error.File, error.Line));
        Assert.Contains("samples", error.Message, StringComparison.Ordinal);
    }

    private static RunResult Resting() =>
        new("rest.csv", 0.9, "at rest", 100, 2.0, 0.01, 1, null, null, null, null, [RunFlag.NotTurning], [new Diagnostic(Severity.Info, "note", "a note", "rest.csv", 3)]);

    private static string WriteLines(params RunResult[] runs)
    {
        using var stream = new MemoryStream();
        RunLines.Write(new RunSet(runs, "V"), stream);
        return Encoding.UTF8.GetString(stream.ToArray());
    }

    private string Save(string text)
    {
        var path = Path.Combine(folder, Guid.NewGuid().ToString("N") + ".jsonl");
        File.WriteAllText(path, text);
        return path;
    }

    private static IEnumerable<string> Keys(JsonElement e) => e.ValueKind switch
    {
        JsonValueKind.Object => e.EnumerateObject().SelectMany(p => Keys(p.Value).Prepend(p.Name)),
        JsonValueKind.Array => e.EnumerateArray().SelectMany(Keys),
        _ => [],
    };

    [GeneratedRegex("^[a-z][a-z0-9]*(_[a-z0-9]+)*$")]
    private static partial Regex SnakeCase();

    [GeneratedRegex("\"(NaN|-?Infinity)\"")]
    private static partial Regex NumberAsText();
}
