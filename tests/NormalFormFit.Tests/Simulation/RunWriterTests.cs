using System.Globalization;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Simulation;

public sealed class RunWriterTests : IDisposable
{
    private readonly string folder = Path.Combine(Path.GetTempPath(), "nffit-writer-" + Guid.NewGuid().ToString("N"));

    public RunWriterTests() => Directory.CreateDirectory(folder);

    public void Dispose() => Directory.Delete(folder, recursive: true);

    [Fact]
    public void WriteRun_ThenParseWithInvariantCulture_GivesBackTheSameDoubles()
    {
        // Round-trip of the "R" format (common practice, no source): double.Parse(x.ToString("R")) == x.
        var run = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.3, MeasurementNoise = 0.1, Revolutions = 3 });
        var path = Path.Combine(folder, "run.csv");
        RunWriter.WriteRun(path, run);

        var lines = File.ReadAllLines(path);
        Assert.Equal("t,theta", lines[0]);
        Assert.Equal(run.Time.Length + 1, lines.Length);
        for (var i = 0; i < run.Time.Length; i++)
        {
            var fields = lines[i + 1].Split(',');
            Assert.Equal(2, fields.Length);
            Assert.Equal(run.Time[i], double.Parse(fields[0], CultureInfo.InvariantCulture));
            Assert.Equal(run.Phase[i], double.Parse(fields[1], CultureInfo.InvariantCulture));
        }

        // Compact: sample times print as the decimals they stand for.
        Assert.StartsWith("0.03,", lines[4], StringComparison.Ordinal);
    }

    [Fact]
    public void WriteRun_UnderDecimalCommaCulture_StillWritesInvariantNumbers()
    {
        var comma = (CultureInfo)CultureInfo.InvariantCulture.Clone();
        comma.NumberFormat.NumberDecimalSeparator = ",";
        var previous = CultureInfo.CurrentCulture;
        var path = Path.Combine(folder, "comma.csv");
        try
        {
            CultureInfo.CurrentCulture = comma;
            RunWriter.WriteColumns(path, [0.0, 0.5], [1.25, -2.5]);
        }
        finally
        {
            CultureInfo.CurrentCulture = previous;
        }

        Assert.Equal(["t,theta", "0,1.25", "0.5,-2.5"], File.ReadAllLines(path));
    }

    [Fact]
    public void WriteRun_IntoMissingFolder_ThrowsAndWritesNothing()
    {
        var missing = Path.Combine(folder, "no-such-folder");
        var path = Path.Combine(missing, "run.csv");
        Assert.Throws<DirectoryNotFoundException>(() => RunWriter.WriteColumns(path, [0.0], [0.0]));
        Assert.False(Directory.Exists(missing));
        Assert.Empty(Directory.EnumerateFileSystemEntries(folder));
    }

    [Fact]
    public void WriteAtomically_WhenWritingFails_LeavesTargetUnchangedAndNoTemporaryFile()
    {
        var path = Path.Combine(folder, "run.csv");
        File.WriteAllText(path, "old content\n");

        Assert.Throws<InvalidOperationException>(() => RunWriter.WriteAtomically(path, writer =>
        {
            writer.Write(new string('x', 1 << 20)); // more than the buffers, so bytes reach the temporary file
            throw new InvalidOperationException("simulated failure");
        }));

        Assert.Equal("old content\n", File.ReadAllText(path));
        Assert.Equal([path], Directory.GetFiles(folder));
    }

    [Fact]
    public void WriteRun_OverExistingFile_ReplacesItWhole()
    {
        var path = Path.Combine(folder, "run.csv");
        File.WriteAllText(path, new string('y', 100_000));
        RunWriter.WriteColumns(path, [1.0], [2.0]);
        Assert.Equal("t,theta\n1,2\n", File.ReadAllText(path));
    }

    [Fact]
    public void WriteColumns_OfUnequalLength_Throws()
    {
        Assert.Throws<ArgumentException>(() => RunWriter.WriteColumns(Path.Combine(folder, "x.csv"), [0.0, 1.0], [0.0]));
        Assert.Empty(Directory.EnumerateFileSystemEntries(folder));
    }

    [Fact]
    public void WriteManifest_QuotesFieldsWithCommasAndQuotes()
    {
        // Quoting rules of RFC 4180 §2 (fields with commas or quotes are quoted, inner quotes doubled).
        var path = Path.Combine(folder, "manifest.csv");
        RunWriter.WriteManifest(path, [
            new ManifestEntry("run-00.csv", 1.05, "plain"),
            new ManifestEntry("a,b.csv", -0.1, "say \"hi\""),
            new ManifestEntry("run-02.csv", 2.0),
        ]);

        Assert.Equal(
            ["file,param,label", "run-00.csv,1.05,plain", "\"a,b.csv\",-0.1,\"say \"\"hi\"\"\"", "run-02.csv,2,"],
            File.ReadAllLines(path));
    }

    [Fact]
    public void WriteManifest_ThenManifestRead_GivesBackTheSameEntries()
    {
        // The writer and the reader share one row type: whatever is written reads back, including fields the writer must
        // quote (separator, quote, blanks at an end, a leading '#') and the units column.
        var path = Path.Combine(folder, "manifest.csv");
        ManifestEntry[] entries = [
            new("run-00.csv", 1.05, "plain", "mA"),
            new("a,b.csv", -0.1, "say \"hi\""),
            new("sub/run-02.csv", 0.1 + 0.2, null, "mA"),
            new("#3.csv", 4, " padded ", "m A"),
        ];
        RunWriter.WriteManifest(path, entries);

        var read = Manifest.Read(path);

        Assert.Empty(read.Diagnostics);
        Assert.Equal([2, 3, 4, 5], read.Value!.Entries.Select(e => e.Line));
        Assert.Equal(entries, read.Value.Entries.Select(e => e with { Line = 0 }));
        Assert.Equal(Path.Combine(folder, "sub", "run-02.csv"), read.Value.FullPathOf(read.Value.Entries[2]));
    }

    [Fact]
    public void WriteManifest_OfALabelWithALineBreak_ThrowsAndWritesNothing()
    {
        Assert.Throws<ArgumentException>(() => RunWriter.WriteManifest(Path.Combine(folder, "manifest.csv"), [new ManifestEntry("r.csv", 1, "two\nlines")]));
        Assert.Empty(Directory.EnumerateFileSystemEntries(folder));
    }

    [Fact]
    public void WriteManifest_WithoutLabels_HasTwoColumns()
    {
        var path = Path.Combine(folder, "manifest.csv");
        RunWriter.WriteManifest(path, [new ManifestEntry("r.csv", 0.1 + 0.2)]);
        var lines = File.ReadAllLines(path);
        Assert.Equal("file,param", lines[0]);
        Assert.Equal(0.1 + 0.2, double.Parse(lines[1].Split(',')[1], CultureInfo.InvariantCulture));
    }

    [Fact]
    public void SimulationSet_WritesManifestAndOneFilePerMu_WithSeedsFromTemplate()
    {
        var directory = Path.Combine(folder, "set");
        double[] mus = [1.05, 1.2, 1.5];
        var template = new SimulationOptions { Revolutions = 3, MeasurementNoise = 0.02, Seed = 100 };
        var result = SimulationSet.Write(directory, BuiltInModels.Rotor, mus, template);

        Assert.Equal(Path.Combine(Path.GetFullPath(directory), "manifest.csv"), result.ManifestPath);
        var manifest = File.ReadAllLines(result.ManifestPath);
        Assert.Equal("file,param,label", manifest[0]);
        Assert.Equal(mus.Length + 1, manifest.Length);
        for (var k = 0; k < mus.Length; k++)
        {
            var fields = manifest[k + 1].Split(',');
            Assert.Equal($"run-0{k}.csv", fields[0]);
            Assert.Equal(mus[k], double.Parse(fields[1], CultureInfo.InvariantCulture));
            Assert.Equal(100 + k, result.Runs[k].Seed);
            Assert.True(result.Runs[k].ReachedRevolutions);

            // The file holds exactly the run that the derived options produce.
            var run = Simulator.Run(BuiltInModels.Rotor, template with { Mu = mus[k], Seed = 100 + k });
            var lines = File.ReadAllLines(Path.Combine(directory, fields[0]));
            Assert.Equal(run.Time.Length + 1, lines.Length);
            Assert.Equal(result.Runs[k].Samples, run.Time.Length);
            Assert.Equal(run.Phase[^1], double.Parse(lines[^1].Split(',')[1], CultureInfo.InvariantCulture));
        }
    }

    [Fact]
    public void SimulationSet_WithInvalidTemplate_ThrowsBeforeWritingAnything()
    {
        var directory = Path.Combine(folder, "bad");
        Assert.Throws<ArgumentException>(() => SimulationSet.Write(
            directory, BuiltInModels.Rotor, [1.1, double.NaN], new SimulationOptions()));
        Assert.False(Directory.Exists(directory));
    }
}
