using System.Text;
using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

/// <summary>The same samples written in the forms users export must read to the same recording.</summary>
public class FileFormTests
{
    private static Loaded<RunRecording> Read(string text, RunReadOptions? options = null) =>
        RunReader.ReadRecording(new MemoryStream(Encoding.UTF8.GetBytes(text)), "f.csv", options ?? RunReadOptions.Default);

    public static TheoryData<string, string> PhaseForms => new()
    {
        { "comma", "t,theta\n0,0.5\n0.25,1.5\n0.5,-3\n" },
        { "semicolon, decimal comma detected", "t;theta\n0;0,5\n0,25;1,5\n0,5;-3\n" },
        { "tab, CRLF, BOM", "\uFEFFt\ttheta\r\n0\t0.5\r\n0.25\t1.5\r\n0.5\t-3\r\n" },
        { "whitespace, comments, extra column", "# lab export\n  t   theta  gain\n0 0.5 1\n# pause\n0.25 1.5 1\n0.5  -3 1\n" },
        { "no header", "0,0.5\n0.25,1.5\n0.5,-3\n" },
        { "quoted header, reordered columns", "\"theta\",\"t\"\n0.5,0\n1.5,0.25\n-3,0.5\n" },
        { "quoted fields with separators and quotes inside (RFC 4180 §2)", "t,theta,note\n0,0.5,\"start, \"\"cold\"\"\"\n\"0.25\",1.5,\"\"\n0.5,-3, \"a,b\" \n" },
    };

    [Theory]
    [MemberData(nameof(PhaseForms))]
    public void PhaseFile_InEveryDelimitedForm_ReadsToTheSameSamples(string form, string text)
    {
        var r = Read(text);
        Assert.True(r.Succeeded, form + ": " + string.Join("; ", r.Diagnostics));
        Assert.Equal(RecordingKind.Phase, r.Value!.Kind);
        var phase = Assert.IsType<PhaseRecording>(r.Value);
        Assert.Equal([0, 0.25, 0.5], phase.Time);
        Assert.Equal([0.5, 1.5, -3], phase.Phase);
    }

    [Fact]
    public void Manifest_WithQuotedFields_ReadsTheTextBetweenTheQuotes()
    {
        // RFC 4180 §2: a quoted field may hold the separator, and "" inside it stands for one quote.
        var path = Path.Combine(Path.GetTempPath(), $"nffit-manifest-{Guid.NewGuid():N}.csv");
        File.WriteAllText(path, "file,param,label,units\n\"a,b.csv\",1.5,\"say \"\"hi\"\", twice\",\n\"c.csv\" , 2 ,plain,mA\n");
        try
        {
            var entries = Manifest.Read(path).Value!.Entries;

            Assert.Equal(["a,b.csv", "c.csv"], entries.Select(e => e.File));
            Assert.Equal([1.5, 2.0], entries.Select(e => e.Param));
            Assert.Equal(["say \"hi\", twice", "plain"], entries.Select(e => e.Label));
            Assert.Equal([null, "mA"], entries.Select(e => e.Units));
        }
        finally
        {
            File.Delete(path);
        }
    }

    [Fact]
    public void CommentLineOfExactlyOneMiB_IsWithinTheLineLimitAndRead()
    {
        // The limit is 1 MiB = 1 048 576 bytes per line, line end excluded (docs/input-formats.md): the boundary is legal.
        var comment = "#" + new string('c', (1 << 20) - 1);
        var r = Read($"t,theta\n{comment}\n0,0.5\n0.25,1.5\n0.5,-3\n");

        Assert.True(r.Succeeded, string.Join("; ", r.Diagnostics));
        Assert.Equal([0, 0.25, 0.5], Assert.IsType<PhaseRecording>(r.Value).Time);
    }

    [Fact]
    public void PhaseInDegreesAndTurns_IsConvertedToRadians()
    {
        var deg = Assert.IsType<PhaseRecording>(Read("t,theta\n0,90\n1,180\n", new RunReadOptions { PhaseUnit = PhaseUnit.Degrees }).Value).Phase;
        var turns = Assert.IsType<PhaseRecording>(Read("t,theta\n0,0.25\n1,0.5\n", new RunReadOptions { PhaseUnit = PhaseUnit.Turns }).Value).Phase;
        Assert.Equal(Math.PI / 2, deg[0], 15);
        Assert.Equal(Math.PI, deg[1], 15);
        Assert.Equal(Math.PI / 2, turns[0], 15);
        Assert.Equal(Math.PI, turns[1], 15);
    }

    [Fact]
    public void UnwrappedPhase_WithStepsAboveHalfATurn_IsKeptAsRecordedWhenSaidToBeUnwrapped()
    {
        var text = "t,theta\n0,0\n1,4\n2,8\n3,12\n";
        var asWrapped = Trajectory.FromRecording(Assert.IsType<PhaseRecording>(Read(text).Value));
        var asUnwrapped = Trajectory.FromRecording(Assert.IsType<PhaseRecording>(Read(text, new RunReadOptions { PhaseUnwrapped = true }).Value));
        Assert.Equal([0, 4, 8, 12], asUnwrapped.Phase);
        Assert.NotEqual(12, asWrapped.Phase[^1], 6);
    }

    [Fact]
    public void Kind_IsInferredFromTheColumns()
    {
        Assert.Equal(RecordingKind.Positions, Read("t,x,y\n0,1,2\n").Value!.Kind);
        Assert.Equal(RecordingKind.Events, Read("spike_time\n0.1\n0.7\n").Value!.Kind);
        Assert.Equal(RecordingKind.Events, Read("0.1\n0.7\n").Value!.Kind);
        Assert.Equal(RecordingKind.Positions, Read("frame_t,cx,cy\n0,1,2\n", new RunReadOptions { TimeColumn = "frame_t", XColumn = "cx", YColumn = "cy" }).Value!.Kind);
        Assert.Equal([0.1, 0.7], Assert.IsType<EventRecording>(Read("t,channel\n0.1,3\n0.7,3\n", new RunReadOptions { Kind = RecordingKindOption.Events }).Value).Times);
    }

    [Fact]
    public void MissingValuesAndLongPauses_AreMissingSamples_TheReaderDoesNotSplitTheRun()
    {
        var sb = new StringBuilder("t,x,y\n");
        for (var i = 0; i < 100; i++)
        {
            var t = i < 60 ? i * 0.01 : 2 + (i * 0.01);   // a pause of ~200 steps after sample 59
            sb.Append(i == 30 ? "0.3,NaN,1\n" : FormattableString.Invariant($"{t},{Math.Cos(t)},{Math.Sin(t)}\n"));
        }

        var r = Read(sb.ToString());
        var positions = Assert.IsType<PositionRecording>(r.Value);
        Assert.Equal([0], positions.SegmentStarts);
        Assert.Equal(1, positions.Dropped.Blank);
        Assert.Contains(r.Diagnostics, d => d.Code == "gaps" && d.Severity == Severity.Info);
    }

    [Fact]
    public void ExplicitDecimalComma_ReadsCommaDecimals()
    {
        var r = Read("t;theta\n0;0,5\n1;1,5\n", new RunReadOptions { DecimalComma = true });
        Assert.Equal([0.5, 1.5], Assert.IsType<PhaseRecording>(r.Value).Phase);
        Assert.DoesNotContain(r.Diagnostics, d => d.Code == "decimal-comma");
    }
}
