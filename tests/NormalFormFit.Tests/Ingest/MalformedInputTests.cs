using System.Security.Cryptography;
using System.Text;
using NormalFormFit.Cli;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Ingest;

/// <summary>
/// A corpus of malformed run files and manifests, each run through the command line as a user would: one clear
/// message naming the file and line (and column where it helps), the documented exit code, no stack trace, no
/// output file, and the input left as it was. Exit codes: 2 bad input or usage, 3 valid data that cannot answer.
/// </summary>
public class MalformedInputTests
{
    /// <summary>A malformed run file: its bytes, where the error is, and a fragment of the message.</summary>
    public sealed record BadRun(string File, byte[] Bytes, int? Line, int? Column, string Fragment, string[] ExtraArgs)
    {
        public override string ToString() => File;
    }

    private static byte[] T(string s) => Encoding.UTF8.GetBytes(s);

    private static BadRun Bad(string file, string text, int? line, int? column, string fragment, params string[] extra) =>
        new(file, T(text), line, column, fragment, extra);

    public static TheoryData<BadRun> RunCases => new()
    {
        Bad("empty.csv", "", null, null, "holds no data"),
        Bad("comments-only.csv", "# exported by hand\n\n# nothing else\n", null, null, "holds no data"),
        Bad("header-only.csv", "t,theta\n", 1, null, "header but no data lines"),
        Bad("text-for-phase.csv", "t,theta\n0,0.1\n0.01,abc\n", 3, 6, "expected a number for the phase in column 2, found 'abc'"),
        Bad("text-for-time.csv", "t,theta\n0,0.1\nnoon,0.2\n", 3, 1, "expected a number for the time in column 1, found 'noon'"),
        Bad("infinite-time.csv", "t,theta\n0,0\ninf,1\n", 3, 1, "expected a number for the time"),
        Bad("time-backwards.csv", "t,theta\n0,0\n0.02,0.1\n0.01,0.2\n", 4, 1, "time goes backwards (0.01 after 0.02 on line 3)"),
        Bad("time-repeats.csv", "t,theta\n0,0\n0.01,0.1\n0.01,0.2\n", 4, 1, "time repeats"),
        Bad("too-few-fields.csv", "t,theta\n0,0.1\n0.01\n", 3, 1, "found 1 field(s) separated by commas, but the header has 2"),
        Bad("too-many-fields.csv", "t,theta\n0,0.1\n0.01,0.2,7\n", 3, 1, "found 3 field(s)"),
        Bad("decimal-comma-in-csv.csv", "t,theta\n0,5,1,2\n", 2, 1, "a decimal comma in a comma-separated file splits numbers"),
        new BadRun("binary.csv", [0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A, 0x00, 0x00, 0x00, 0x0D, 0x49, 0x48, 0x44, 0x52], 1, null, "not text", []),
        new BadRun("binary-after-header.csv", [.. T("t,theta\n0,0\n"), 0x00, 0x01, 0x2C, 0x02, 0x0A], 3, null, "not text", []),
        new BadRun("invalid-utf8.csv", [.. T("t,theta\n0,0\n0.1,"), 0xFF, 0xFE, 0x0A], 3, null, "not text", []),
        Bad("two-unknown-columns.csv", "time,voltage,current\n0,1,2\n", 1, 1, "cannot tell what the file records from its header (found: time, voltage, current) (columns 'voltage', 'current' could each be a single signal"),
        Bad("signal-of-one-sample.csv", "t,x\n0,1\n", null, null, "column 'x' holds 1 sample(s)"),
        Bad("constant-signal.csv", "time_ms,Vm_mV\n0,-65\n0.05,-65\n0.1,-65\n0.15,-65\n", null, null, "column 'Vm_mV' is constant (-65) over all 4 samples"),
        Bad("text-for-y.csv", "t,x,y\n0,1,2\n0.1,1,zz\n", 3, 7, "expected a number for the y in column 3, found 'zz'"),
        Bad("positions-on-a-line.csv", "t,x,y\n0,1,1\n1,2,2\n2,3,3\n3,4,4\n4,5,5\n5,6,6\n", null, null, "do not trace a closed orbit"),
        Bad("events-backwards.csv", "spike_time\n1.0\n2.0\n1.5\n", 4, 1, "event time goes backwards"),
        Bad("events-repeat.csv", "spike_time\n1.0\n2.0\n2.0\n", 4, 1, "event time repeats"),
        Bad("crlf-bad-number.csv", "t,theta\r\n0,0\r\n0.1,x\r\n", 3, 5, "found 'x'"),
        Bad("bom-comments-bad-number.csv", "\uFEFF# camera export\nt;theta\n# paused here\n0;0\n0.1;1..2\n", 5, 5, "found '1..2'"),
        Bad("whitespace-short-line.txt", "t theta\n0 0\n0.5\n", 3, 1, "separated by blanks"),
        Bad("phase-kind-forced-on-positions.csv", "t,x,y\n0,1,2\n", 1, 1, "no phase column 'theta' in the header", "--kind", "phase"),
        Bad("positions-kind-forced-on-phase.csv", "t,theta\n0,1\n", 1, 1, "no x column 'x' in the header", "--kind", "positions"),
        Bad("column-beyond-line.csv", "0,1\n0.1,2\n", 1, 1, "the phase column is 5", "--phase-column", "5"),

        // Lines over the 1 MiB limit (docs/input-formats.md) stop the reading at the first byte beyond it.
        new BadRun("no-line-end.csv", [.. T("t,theta\n0,0\n0."), .. Enumerable.Repeat((byte)'7', OneMiB)], 3, OneMiB + 1, "longer than 1 MiB (1 048 576 bytes) without a line end", []),
        new BadRun("binary-no-line-end.csv", [.. T("t,theta\n"), .. Garbage(2 * OneMiB)], 2, OneMiB + 1, "the file is not text", []),
        new BadRun("cr-line-ends.csv", T(CrOnlyPhaseFile(OneMiB + 1)), 1, OneMiB + 1, "end in CR alone: convert the line ends to LF or CRLF", []),
    };

    private const int OneMiB = 1 << 20;

    // Seeded ASCII bytes without a line feed (one character per byte, so the column is the byte position), NULs included.
    private static byte[] Garbage(int n)
    {
        var random = new Random(12);
        var bytes = new byte[n];
        random.NextBytes(bytes);
        for (var i = 0; i < n; i++)
        {
            bytes[i] = (byte)(bytes[i] & 0x7F);
            bytes[i] = bytes[i] == (byte)'\n' ? (byte)0 : bytes[i];
        }

        return bytes;
    }

    // A good phase file of at least n bytes whose lines end in CR alone (old Mac line ends): one line to the reader.
    private static string CrOnlyPhaseFile(int n)
    {
        var sb = new StringBuilder("t,theta\r");
        for (var i = 0; sb.Length < n; i++)
        {
            sb.Append(i).Append(",0.5\r");
        }

        return sb.ToString();
    }

    [Theory]
    [MemberData(nameof(RunCases))]
    public void MalformedRunFile_GivesOneClearMessageAndExitCodeTwo(BadRun bad)
    {
        ArgumentNullException.ThrowIfNull(bad);
        using var files = new RecordingFiles();
        var path = files.WriteBytes(bad.File, bad.Bytes);
        var manifest = files.WriteBytes("manifest.csv", T($"file,param\n{bad.File},1.1\n"));
        var before = SHA256.HashData(File.ReadAllBytes(path));
        var json = Path.Combine(files.Folder, "out.json");
        var (code, stdout, stderr) = Run(["analyze", manifest, "--json", json, .. bad.ExtraArgs]);

        Assert.Equal(2, code);
        var where = bad.Line is null ? $"{bad.File}: error: "
            : bad.Column is null ? $"{bad.File}:{bad.Line}: error: "
            : $"{bad.File}:{bad.Line}:{bad.Column}: error: ";
        Assert.Contains(where, stderr, StringComparison.Ordinal);
        Assert.Contains(bad.Fragment, stderr, StringComparison.Ordinal);
        AssertClean(stderr, stdout);
        Assert.Single(stderr.Split('\n'), l => l.Contains("error:", StringComparison.Ordinal));
        Assert.False(File.Exists(json), "no report may be written when the input is bad");
        Assert.Equal(before, SHA256.HashData(File.ReadAllBytes(path)));
    }

    public static TheoryData<string, string, int, int?, string> ManifestCases => new()
    {
        { "empty manifest", "", 2, null, "the manifest is empty" },
        { "bad header", "path,mu\nrun.csv,1\n", 2, 1, "expected a header with a column 'file'" },
        { "param not a number", "file,param\na.csv,1.1\nb.csv,one\n", 2, 3, "expected a number for param, found 'one'" },
        { "duplicate param", "file,param\na.csv,1.1\nb.csv,1.10\n", 2, 3, "param 1.1 already appears on line 2" },
        { "missing run file", "file,param\nnot-there.csv,1.1\n", 2, null, "not-there.csv: error: the file does not exist" },
        { "header only", "file,param\n", 2, null, "names no runs" },
    };

    [Theory]
    [MemberData(nameof(ManifestCases))]
    public void MalformedManifest_GivesOneClearMessageAndExitCodeTwo(string name, string text, int exit, int? line, string fragment)
    {
        using var files = new RecordingFiles();
        var manifest = files.WriteBytes("manifest.csv", T(text));
        var (code, stdout, stderr) = Run(["analyze", manifest]);
        Assert.True(exit == code, $"{name}: exit {code}, stderr {stderr}");
        Assert.Contains(fragment, stderr, StringComparison.Ordinal);
        if (line is { } l)
        {
            Assert.Contains($"manifest.csv:{l}:", stderr, StringComparison.Ordinal);
        }

        AssertClean(stderr, stdout);
    }

    [Fact]
    public void ManifestWithALineOverOneMiB_GivesOneMessageWithLineAndColumnAndExitCodeTwo()
    {
        using var files = new RecordingFiles();
        var manifest = files.WriteBytes("manifest.csv", [.. T("file,param\nrun.csv,"), .. Enumerable.Repeat((byte)'1', OneMiB)]);

        var (code, stdout, stderr) = Run(["analyze", manifest]);

        Assert.Equal(2, code);
        Assert.Contains($"manifest.csv:2:{OneMiB + 1}: error: the line is longer than 1 MiB", stderr, StringComparison.Ordinal);
        Assert.Contains("expected a CSV file with header 'file,param'", stderr, StringComparison.Ordinal);
        AssertClean(stderr, stdout);
    }

    [Fact]
    public void MissingManifest_GivesExitCodeTwo()
    {
        var (code, _, stderr) = Run(["analyze", Path.Combine(Path.GetTempPath(), "no-such-folder-nffit", "manifest.csv")]);
        Assert.Equal(2, code);
        Assert.Contains("the manifest does not exist", stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void TwoGoodRuns_AreValidButCannotAnswer_ExitCodeThree()
    {
        using var files = new RecordingFiles();
        foreach (var mu in new[] { 1.1, 1.2 })
        {
            var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = mu, Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01 });
            files.AddRun($"r{mu}.csv", mu, "t,theta", sim.Time, sim.Phase);
        }

        var (code, stdout, stderr) = Run(["analyze", files.WriteManifest()]);
        Assert.Equal(3, code);
        Assert.Contains("only 2 of 2 runs turn and can be analysed", stderr, StringComparison.Ordinal);
        AssertClean(stderr, stdout);
    }

    [Fact]
    public void UnknownKind_IsAUsageError()
    {
        var (code, _, stderr) = Run(["analyze", "m.csv", "--kind", "angles"]);
        Assert.Equal(2, code);
        Assert.Contains("usage:", stderr, StringComparison.Ordinal);
    }

    private static void AssertClean(string stderr, string stdout)
    {
        Assert.DoesNotContain("   at ", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("Exception", stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("internal error", stderr, StringComparison.Ordinal);
        Assert.Equal(string.Empty, stdout);
    }

    internal static (int Code, string Stdout, string Stderr) Run(string[] args)
    {
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();
        var code = NffitApp.Run(args, stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }
}
