using System.Text;
using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

public class RunReaderTests
{
    private static Loaded<PhaseRecording> ReadText(string text, RunReadOptions? options = null) =>
        RunReader.Read(new MemoryStream(Encoding.UTF8.GetBytes(text)), "run.csv", options ?? RunReadOptions.Default);

    [Fact]
    public void Read_CommaFileWithCommentsCrlfAndBom_ReadsAllSamples()
    {
        var r = ReadText("\uFEFF# camera run\r\nt,theta\r\n0,0.1\r\n# note\r\n0.5,0.2\r\n1,0.3\r\n");
        Assert.True(r.Succeeded);
        Assert.Equal([0, 0.5, 1], r.Value!.Time);
        Assert.Equal([0.1, 0.2, 0.3], r.Value.Phase);
    }

    [Fact]
    public void Read_DecimalCommaWithSemicolons_WhenAsked_ParsesNumbers()
    {
        // One file in decimal-comma form, as STYLE.md asks (common practice, no source).
        var r = ReadText("t;theta\n0;0,5\n1,5;1,25\n", new RunReadOptions { DecimalComma = true });
        Assert.True(r.Succeeded);
        Assert.Equal([0, 1.5], r.Value!.Time);
        Assert.Equal([0.5, 1.25], r.Value.Phase);
    }

    [Fact]
    public void Read_DegreesAndTurns_AreConvertedToRadians()
    {
        var deg = ReadText("t,theta\n0,180\n", new RunReadOptions { PhaseUnit = PhaseUnit.Degrees });
        var turns = ReadText("t,theta\n0,0.25\n", new RunReadOptions { PhaseUnit = PhaseUnit.Turns });
        Assert.Equal(Math.PI, deg.Value!.Phase[0], 15);
        Assert.Equal(Math.PI / 2, turns.Value!.Phase[0], 15);
    }

    [Fact]
    public void Read_MissingValues_AreDroppedAndCounted_WithoutSplittingTheRun()
    {
        // Whether the phase can be followed across the gap is decided when it is unwrapped (Trajectory), not here.
        var r = ReadText("t,theta\n0,0\n1,0.1\n2,NaN\n3,\n4,0.4\n5,0.5\n");
        Assert.Equal([0], r.Value!.SegmentStarts);
        Assert.Equal(4, r.Value.Time.Length);
        Assert.Equal(new DroppedRows(2, 0, 0, 0), r.Value.Dropped);
    }

    [Theory]
    [InlineData("", "empty-file", null)]
    [InlineData("t,theta\n", "no-data", 1)]
    [InlineData("t,theta\n0,0.1\n1,abc\n", "not-a-number", 3)]
    [InlineData("t,theta\n0,0.1\n0,0.2\n", "time-not-increasing", 3)]
    [InlineData("t,theta\n1,0.1\n0.5,0.2\n", "time-not-increasing", 3)]
    [InlineData("t,theta\n0,0.1\n1\n", "wrong-field-count", 3)]
    [InlineData("time,voltage\n0,0.1\n", "missing-column", 1)]
    [InlineData("t,theta,score\n0,0.1,0.9\n1,0.2,87\n", "quality-scale", 3)]
    public void Read_BadContent_GivesOneErrorWithLine(string text, string code, int? line)
    {
        var r = ReadText(text);
        Assert.False(r.Succeeded);
        var d = Assert.Single(r.Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Equal(line, d.Line);
        Assert.Equal("run.csv", d.File);
    }

    [Fact]
    public void Read_BinaryGarbage_IsRejectedAsNotText()
    {
        var bytes = new byte[] { 0x00, 0x01, 0xFF, 0xFE, 0x10, 0x0A, 0x00, 0x02 };
        var r = RunReader.Read(new MemoryStream(bytes), "run.csv", RunReadOptions.Default);
        Assert.Equal("binary-file", Assert.Single(r.Diagnostics).Code);
    }

    [Fact]
    public void Read_NotANumber_NamesTheColumn()
    {
        var d = Assert.Single(ReadText("t,theta\n0,0.1\n1,  x1\n").Diagnostics);
        Assert.Equal(5, d.Column);
        Assert.Contains("'x1'", d.Message, StringComparison.Ordinal);
    }
}
