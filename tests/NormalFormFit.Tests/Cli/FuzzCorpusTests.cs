using System.Security.Cryptography;
using System.Text;

namespace NormalFormFit.Tests.Cli;

/// <summary>
/// Careless and hostile input, one case each (docs/data-safety.md): every case asserts its exit code, a first message
/// line that names the place, no stack trace, nothing raw that a terminal would act on, and that no input or earlier
/// output changed (SHA-256 of every file in the case's folder before and after).
/// </summary>
public sealed class FuzzCorpusTests : IDisposable
{
    private readonly string dir = Directory.CreateTempSubdirectory("nffit-fuzz-").FullName;

    public FuzzCorpusTests()
    {
        // Invented demo scenario: five rotor runs above onset.
        var (code, _, err) = CliTestHost.Run("simulate", "--params", "1.02,1.04,1.07,1.1,1.15", "--revolutions", "6", "--dt", "0.02",
            "--noise", "0.01", "--out", Path.Combine(dir, "data"), "--quiet");
        Assert.True(code == 0, err);
    }

    public void Dispose() => Directory.Delete(dir, recursive: true);

    public static TheoryData<string> Cases => [.. CaseNames];

    private static readonly string[] CaseNames =
    [
        "manifest-decimal-comma", "manifest-is-a-folder", "manifest-is-a-fifo", "run-file-is-a-fifo", "run-file-is-a-folder",
        "manifest-utf16", "run-file-latin1", "at-sign-is-a-file-name", "phase-column-zero", "few-samples",
        "same-run-under-many-params", "param-1e300", "param-span-below-precision", "events-on-sample-times",
        "escape-sequences-in-a-file-name", "invisible-characters-in-a-file-name", "cr-only-run-file",
        "json-empty-name", "out-empty-name", "combine-same-file-twice", "combine-copied-lines", "combine-dev-zero",
        "combine-fifo", "combine-not-json", "combine-line-without-end", "simulate-dt-huge", "simulate-dt-tiny",
        "simulate-revolutions-max", "simulate-noise-negative", "simulate-diffusion-nan", "simulate-sqrt-of-negative",
        "simulate-out-empty", "model-10-kilobytes", "model-too-many-operations", "compare-parameter-named-c0",
    ];

    [Theory]
    [MemberData(nameof(Cases))]
    public void BadInput_GetsItsExitCodeAndOneMessageAtThePlace_AndChangesNothing(string name)
    {
        var (args, expectedCode, place, words) = Build(name);
        var before = HashTree(dir);

        var (code, stdout, stderr) = CliTestHost.Run(args);

        Assert.True(expectedCode == code, $"{name}: exit {code}, expected {expectedCode}; stderr: {stderr}");
        var first = stderr.Split('\n')[0];
        Assert.StartsWith("nffit: ", first, StringComparison.Ordinal);
        Assert.Contains(place, first, StringComparison.Ordinal);
        Assert.Contains(words, first, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("Exception", stderr, StringComparison.Ordinal);
        Assert.False(stderr.Any(c => c != '\n' && (char.IsControl(c) || c is '\u200B' or '\u202E' or '\uFEFF')), "a raw control or invisible character reached the terminal");
        Assert.True(stderr.Length < 8000, $"{name}: {stderr.Length} characters of message");
        Assert.True(expectedCode == 0 || !stdout.Contains("μc", StringComparison.Ordinal), "no result may be printed");
        Assert.Equal(before, HashTree(dir));
    }

    [Fact]
    public void Compare_WithAParameterTheModelDoesNotDependOn_ReportsItAsUnidentifiable_NeverAsExact()
    {
        var manifest = Path.Combine(dir, "data", "manifest.csv");
        var before = HashTree(dir);

        var (code, stdout, stderr) = CliTestHost.Run("compare", manifest, "--model", "mu - a*sin(theta) + b*0", "--replicates", "19", "--pilot", "0");

        Assert.True(code == 0, stderr);
        Assert.Contains("b          unidentifiable", stdout, StringComparison.Ordinal);
        Assert.DoesNotContain("b                   1", stdout, StringComparison.Ordinal);
        Assert.Contains("the data do not determine b", stdout, StringComparison.Ordinal);
        Assert.Equal(before, HashTree(dir));
    }

    private (string[] Args, int Code, string Place, string Words) Build(string name)
    {
        var data = Path.Combine(dir, "data");
        var manifest = Path.Combine(data, "manifest.csv");
        string F(string file) => Path.Combine(dir, file);
        string Write(string file, string text)
        {
            File.WriteAllText(F(file), text, new UTF8Encoding(false));
            return F(file);
        }

        string Manifest(params string[] rows) => Write("m.csv", "file,param\n" + string.Join("\n", rows) + "\n");
        string Lines()
        {
            var lines = F("runs.jsonl");
            Assert.Equal(0, CliTestHost.Run("analyze", manifest, "--runs-only", lines, "--quiet").Code);
            return lines;
        }

        string Fifo(string file)
        {
            using var mkfifo = System.Diagnostics.Process.Start("mkfifo", F(file))!;
            mkfifo.WaitForExit();
            Assert.Equal(0, mkfifo.ExitCode);
            return F(file);
        }

        switch (name)
        {
            case "manifest-decimal-comma":
                return (["analyze", Manifest("data/run-00.csv,1,01", "data/run-01.csv,1.04", "data/run-02.csv,1.07")], 2, "m.csv:2:", "decimal comma");
            case "manifest-is-a-folder":
                return (["analyze", data], 2, $"{data}: error", "this is a folder, not a file");
            case "manifest-is-a-fifo":
                return (["analyze", Fifo("pipe.csv")], 2, "pipe.csv: error", "named pipe");
            case "run-file-is-a-fifo":
                Fifo("pipe.csv");
                return (["analyze", Manifest("pipe.csv,1", "data/run-01.csv,2", "data/run-02.csv,3")], 2, "pipe.csv: error", "named pipe");
            case "run-file-is-a-folder":
                return (["analyze", Manifest("data,1", "data/run-01.csv,2", "data/run-02.csv,3")], 2, "data: error", "this is a folder");
            case "manifest-utf16":
                File.WriteAllText(F("m16.csv"), "file,param\ndata/run-00.csv,1\n", Encoding.Unicode);
                return (["analyze", F("m16.csv")], 2, "m16.csv:1:1: error", "UTF-16");
            case "run-file-latin1":
                File.WriteAllBytes(F("lat.csv"), [.. "t,th"u8, 0xE9, .. "ta\n0,0\n1,1\n"u8]);
                return (["analyze", Manifest("lat.csv,1", "data/run-01.csv,2", "data/run-02.csv,3")], 2, "lat.csv:1:5: error", "Latin-1");
            case "at-sign-is-a-file-name":
                return (["analyze", "@" + F("args.txt")], 2, "@", "does not exist");
            case "phase-column-zero":
                return (["analyze", manifest, "--phase-column", "0"], 2, "usage: --phase-column 0", "positions start at 1");
            case "few-samples":
                Write("short.csv", "t,theta\n0,0\n0.1,0.3\n0.2,0.6\n");
                return (["analyze", Manifest("short.csv,1")], 3, "m.csv: error", "fewer than 8 samples");
            case "same-run-under-many-params":
                return (["analyze", Manifest([.. Enumerable.Range(1, 20).Select(k => $"data/run-00.csv,{k}")])], 3, "m.csv:3: error", "same data, byte for byte");
            case "param-1e300":
                return (["analyze", Manifest("data/run-00.csv,1e300", "data/run-01.csv,1.04", "data/run-02.csv,1.07")], 3, "m.csv: error", "cannot be fitted");
            case "param-span-below-precision":
                return (["analyze", Manifest("data/run-00.csv,1000000", "data/run-01.csv,1000000.0000000001", "data/run-02.csv,1000000.0000000002")], 3, "m.csv: error", "double precision cannot resolve");
            case "events-on-sample-times":
                return (["analyze", Manifest("data/run-00.csv,1.02", "data/run-01.csv,1.04", "data/run-02.csv,1.07", "data/run-03.csv,1.1"), "--kind", "events", "--event-column", "t"], 3, "m.csv: error", "same period");
            case "escape-sequences-in-a-file-name":
                return (["analyze", Manifest("\u001b]0;owned\u0007x.csv,1", "data/run-01.csv,2", "data/run-02.csv,3")], 2, "\\e]0;owned\\ax.csv: error", "does not exist");
            case "invisible-characters-in-a-file-name":
                return (["analyze", Manifest("a\u200Bb\u202Ec\uFEFF.csv,1", "data/run-01.csv,2", "data/run-02.csv,3")], 2, "a\\u200Bb\\u202Ec\\uFEFF.csv: error", "does not exist");
            case "cr-only-run-file":
                Write("cr.csv", "t,theta\r" + string.Concat(Enumerable.Range(0, 20000).Select(k => $"{k * 0.01},{k * 0.05}\r")));
                return (["analyze", Manifest("cr.csv,1", "data/run-01.csv,2", "data/run-02.csv,3")], 2, "cr.csv:1:", "\\r");
            case "json-empty-name":
                return (["analyze", manifest, "--json", ""], 2, "usage: --json", "needs a file name");
            case "out-empty-name":
                return (["analyze", manifest, "--out", ""], 2, "usage: --out", "needs a folder name");
            case "combine-same-file-twice":
                var twice = Lines();
                return (["combine", twice, twice], 2, "runs.jsonl: error", "given twice");
            case "combine-copied-lines":
                var original = Lines();
                File.Copy(original, F("copy.jsonl"));
                return (["combine", original, F("copy.jsonl")], 2, "copy.jsonl:1: error", "the same run result as");
            case "combine-dev-zero":
                return (["combine", "/dev/zero"], 2, "/dev/zero: error", "a device");
            case "combine-fifo":
                return (["combine", Fifo("lines.jsonl")], 2, "lines.jsonl: error", "named pipe");
            case "combine-not-json":
                return (["combine", Write("bad.jsonl", "{\"schema\": \"nffit-run/2\", \"file\": 3,\n")], 2, "bad.jsonl:1: error", "not valid JSON");
            case "combine-line-without-end":
                Write("long.jsonl", new string('x', NormalFormFit.Reporting.RunLines.MaxLineChars + 10));
                return (["combine", F("long.jsonl")], 2, "long.jsonl:1: error", "longer than");
            case "simulate-dt-huge":
                return (["simulate", "--params", "1.5", "--dt", "1e300", "--out", F("sim")], 2, "usage: --dt", "must be from");
            case "simulate-dt-tiny":
                return (["simulate", "--params", "1.5", "--dt", "1e-300", "--out", F("sim")], 2, "usage: --dt", "must be from");
            case "simulate-revolutions-max":
                return (["simulate", "--params", "1.5", "--revolutions", "2147483647", "--out", F("sim")], 2, "usage: --revolutions", "must be from");
            case "simulate-noise-negative":
                return (["simulate", "--params", "1.5", "--noise", "-1", "--out", F("sim")], 2, "usage: --noise", "must be from");
            case "simulate-diffusion-nan":
                return (["simulate", "--params", "1.5", "--diffusion", "NaN", "--out", F("sim")], 2, "usage: --diffusion", "must be from");
            case "simulate-sqrt-of-negative":
                return (["simulate", "--params", "1", "--model", "sqrt(-1)+mu", "--out", F("sim")], 2, "usage: --model", "not a finite number");
            case "simulate-out-empty":
                return (["simulate", "--params", "1.5", "--out", ""], 2, "usage: --out", "needs a folder name");
            case "model-10-kilobytes":
                return (["compare", manifest, "--model", "mu" + string.Concat(Enumerable.Repeat("+a*sin(theta)", 800))], 2, "--model: error", "more than the 1000 allowed");
            case "model-too-many-operations":
                return (["compare", manifest, "--model", "mu" + string.Concat(Enumerable.Repeat("+a", 400))], 2, "--model: error", "operations");
            case "compare-parameter-named-c0":
                return (["compare", manifest, "--model", "mu - c0*sin(theta)"], 2, "nffit: error", "taken by the map");
            default:
                throw new ArgumentException("unknown case " + name, nameof(name));
        }
    }

    private static Dictionary<string, string> HashTree(string root) =>
        Directory.EnumerateFiles(root, "*", SearchOption.AllDirectories)
            .Where(f => NormalFormFit.Cli.PathGuard.CheckInput(f, "a file")?.Code != "not-a-regular-file")
            .ToDictionary(f => Path.GetRelativePath(root, f), f => Convert.ToHexStringLower(SHA256.HashData(File.ReadAllBytes(f))));
}
