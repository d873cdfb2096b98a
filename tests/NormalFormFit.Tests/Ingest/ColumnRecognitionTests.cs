using System.Text;
using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

/// <summary>
/// Header names read without options (docs/input-formats.md, "Recognised column names"): every form of every role,
/// every unit form, each ambiguity and each refusal. The names are those instruments, trackers and scripts write
/// (common practice, no source).
/// </summary>
public class ColumnRecognitionTests
{
    private static Loaded<RunRecording> Read(string text, RunReadOptions? options = null) =>
        RunReader.ReadRecording(new MemoryStream(Encoding.UTF8.GetBytes(text)), "run.csv", options ?? RunReadOptions.Default);

    [Theory]
    [InlineData("t", ColumnRole.Time, null)]
    [InlineData("time", ColumnRole.Time, null)]
    [InlineData("Timestamp", ColumnRole.Time, null)]
    [InlineData("time_s", ColumnRole.Time, "s")]
    [InlineData("t_ms", ColumnRole.Time, "ms")]
    [InlineData("time_us", ColumnRole.Time, "us")]
    [InlineData("time (s)", ColumnRole.Time, "s")]
    [InlineData("t [ms]", ColumnRole.Time, "ms")]
    [InlineData("Time [µs]", ColumnRole.Time, "us")]
    [InlineData("time_sec", ColumnRole.Time, "s")]
    [InlineData("theta", ColumnRole.Phase, null)]
    [InlineData("phase", ColumnRole.Phase, null)]
    [InlineData("phi", ColumnRole.Phase, null)]
    [InlineData("angle", ColumnRole.Phase, null)]
    [InlineData("angle_deg", ColumnRole.Phase, "deg")]
    [InlineData("theta_rad", ColumnRole.Phase, "rad")]
    [InlineData("phase_turns", ColumnRole.Phase, "turns")]
    [InlineData("angle (degrees)", ColumnRole.Phase, "deg")]
    [InlineData("x", ColumnRole.X, null)]
    [InlineData("y", ColumnRole.Y, null)]
    [InlineData("x_px", ColumnRole.X, "px")]
    [InlineData("y_mm", ColumnRole.Y, "mm")]
    [InlineData("x (px)", ColumnRole.X, "px")]
    [InlineData("pos_x", ColumnRole.X, null)]
    [InlineData("centroid_y", ColumnRole.Y, null)]
    [InlineData("cx", ColumnRole.X, null)]
    [InlineData("confidence", ColumnRole.Quality, null)]
    [InlineData("likelihood", ColumnRole.Quality, null)]
    [InlineData("quality", ColumnRole.Quality, null)]
    [InlineData("score", ColumnRole.Quality, null)]
    [InlineData("frame", ColumnRole.Bookkeeping, null)]
    [InlineData("index", ColumnRole.Bookkeeping, null)]
    [InlineData("sample", ColumnRole.Bookkeeping, null)]
    [InlineData("frame_index", ColumnRole.Bookkeeping, null)]
    [InlineData("Vm", ColumnRole.Other, null)]
    [InlineData("voltage", ColumnRole.Other, null)]
    public void Recognise_EachHeaderForm_GivesItsRoleAndUnit(string header, ColumnRole role, string? unit)
    {
        var c = ColumnNames.Recognise(header);
        Assert.Equal(role, c.Role);
        Assert.Equal(unit, c.Unit);
    }

    [Theory]
    [InlineData("nose_x", ColumnRole.X, "nose")]
    [InlineData("nose_y", ColumnRole.Y, "nose")]
    [InlineData("nose.likelihood", ColumnRole.Quality, "nose")]
    [InlineData("marker1 x", ColumnRole.X, "marker1")]
    public void Recognise_MarkerExportPairs_KeepTheMarkerName(string header, ColumnRole role, string marker)
    {
        var c = ColumnNames.Recognise(header);
        Assert.Equal(role, c.Role);
        Assert.Equal(marker, c.Marker);
    }

    [Fact]
    public void TrackerHeader_IsReadAsPositions_WithSecondsAndTheQualityColumn_AndTheFrameIgnored()
    {
        var r = Read("frame,time_s,x_px,y_px,confidence\n0,0,1,0,0.9\n1,0.1,0,1,0.95\n2,0.2,-1,0,0.2\n3,0.3,,,0\n4,0.4,0,-1,0.99\n");
        var p = Assert.IsType<PositionRecording>(r.Value);
        Assert.Equal("s", p.TimeUnit);
        Assert.Equal([0, 0.1, 0.4], p.Time);
        Assert.Equal(new DroppedRows(1, 1, 0, 0), p.Dropped);
    }

    [Fact]
    public void MarkerExport_WithOneMarker_IsReadAsPositions_UsingItsOwnLikelihood()
    {
        var r = Read("frame,t,nose_x,nose_y,nose_likelihood\n0,0,1,0,0.9\n1,1,0,1,0.1\n2,2,-1,0,0.8\n");
        var p = Assert.IsType<PositionRecording>(r.Value);
        Assert.Equal([0.0, 2.0], p.Time);
        Assert.Equal(1, p.Dropped.LowQuality);
    }

    [Theory]
    [InlineData("time_ms,theta\n0,0\n10,0.1\n", "ms")]
    [InlineData("t [us],theta\n0,0\n10,0.1\n", "us")]
    [InlineData("t,theta\n0,0\n10,0.1\n", null)]
    public void TimeUnit_ComesFromTheHeader(string text, string? unit)
    {
        Assert.Equal(unit, Read(text).Value!.TimeUnit);
    }

    [Fact]
    public void TimeUnitOption_OverridesTheHeader()
    {
        Assert.Equal("ms", Read("time_s,theta\n0,0\n1,0.1\n", new RunReadOptions { TimeUnit = "msec" }).Value!.TimeUnit);
    }

    [Theory]
    [InlineData("t,angle_deg\n0,180\n1,190\n", Math.PI)]
    [InlineData("t,phase_turns\n0,0.5\n1,0.51\n", Math.PI)]
    [InlineData("t,theta_rad\n0,3.141592653589793\n1,3.2\n", Math.PI)]
    public void PhaseUnit_ComesFromTheHeader(string text, double firstRadians)
    {
        Assert.Equal(firstRadians, Assert.IsType<PhaseRecording>(Read(text).Value).Phase[0], 12);
    }

    [Fact]
    public void PhaseUnitOption_OverridesTheHeader()
    {
        var r = Read("t,angle_deg\n0,0.5\n1,0.6\n", new RunReadOptions { PhaseUnit = PhaseUnit.Turns });
        Assert.Equal(Math.PI, Assert.IsType<PhaseRecording>(r.Value).Phase[0], 12);
    }

    [Fact]
    public void ColumnOptions_StillOverrideTheRecognisedNames()
    {
        var r = Read("t,theta,time_ms,angle\n0,0,5,1\n1,0.1,6,1.1\n", new RunReadOptions { TimeColumn = "time_ms", PhaseColumn = "angle" });
        var p = Assert.IsType<PhaseRecording>(r.Value);
        Assert.Equal([5.0, 6.0], p.Time);
        Assert.Equal([1.0, 1.1], p.Phase);
        Assert.Equal("ms", p.TimeUnit);
    }

    [Theory]
    [InlineData("t,time_s,theta\n0,0,0\n", "more than one column could be the time ('t', 'time_s'); choose one with --time-column NAME")]
    [InlineData("t,theta,phase\n0,0,0\n", "more than one column could be the phase ('theta', 'phase'); choose one with --phase-column NAME")]
    [InlineData("t,nose_x,nose_y,tail_x,tail_y\n0,1,2,3,4\n", "more than one pair of columns could be the positions ('nose_x', 'nose_y'; 'tail_x', 'tail_y'); choose one with --x-column NAME --y-column NAME")]
    [InlineData("t,x,y,confidence,score\n0,1,2,1,1\n", "more than one column could be the quality ('confidence', 'score'); choose one with --quality-column NAME")]
    public void TwoCandidatesForOneRole_AreAnErrorListingThemAndTheOption(string text, string message)
    {
        var r = Read(text);
        Assert.Null(r.Value);
        var e = Assert.Single(r.Diagnostics);
        Assert.Equal("missing-column", e.Code);
        Assert.Contains(message, e.Message, StringComparison.Ordinal);
        Assert.Equal(1, e.Line);
    }

    [Fact]
    public void AnAmbiguousRole_IsSettledByItsOption()
    {
        var r = Read("t,nose_x,nose_y,tail_x,tail_y\n0,1,2,3,4\n", new RunReadOptions { XColumn = "tail_x", YColumn = "tail_y" });
        var p = Assert.IsType<PositionRecording>(r.Value);
        Assert.Equal([3.0], p.X);
    }

    [Fact]
    public void MinQuality_SetsTheThreshold_AndQualityNone_UsesEveryRow()
    {
        const string text = "t,x,y,confidence\n0,1,0,0.9\n1,0,1,0.3\n2,-1,0,0.6\n";
        Assert.Equal(2, Read(text).Value!.Count);
        Assert.Equal(1, Read(text, new RunReadOptions { MinQuality = 0.7 }).Value!.Count);
        Assert.Equal(3, Read(text, new RunReadOptions { QualityColumn = "none" }).Value!.Count);
    }

    [Fact]
    public void NonFiniteValues_AreMissingSamples()
    {
        var r = Read("t,theta\n0,0\n1,1e999\n2,-1e999\n3,0.3\n");
        Assert.Equal(2, r.Value!.Count);
        Assert.Equal(2, r.Value.Dropped.Blank);
    }

    [Fact]
    public void EveryRowMissing_IsAnErrorSayingWhy()
    {
        var r = Read("t,x,y,confidence\n0,1,0,0.1\n1,,,0.9\n");
        Assert.Null(r.Value);
        Assert.Contains("every data line is a missing sample (1 with a blank or non-finite value, 1 below quality 0.5)", Assert.Single(r.Diagnostics).Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("time_s,V_m", "V_m")]
    [InlineData("time_ms,Vm_mV", "Vm_mV")]
    [InlineData("t,voltage", "voltage")]
    [InlineData("t,v", "v")]
    [InlineData("time (s),frame,signal", "signal")]
    [InlineData("t [ms],current,confidence", "current")]
    [InlineData("time,x", "x")]
    public void ATimeColumnWithOneOtherMeasuredColumn_IsReadAsOneSignal(string header, string column)
    {
        var fields = header.Split(',').Length;
        var row = string.Join(',', Enumerable.Repeat("1", fields - 1));
        var r = Read($"{header}\n0,{row}\n1,{row}\n");
        var signal = Assert.IsType<SignalRecording>(r.Value);
        Assert.Equal(column, signal.SignalColumnName);
        Assert.Equal([0.0, 1.0], signal.Time);
    }

    [Fact]
    public void TwoColumnsThatCouldEachBeTheSignal_AreNamedInTheError()
    {
        var r = Read("time_s,V_m,I_cmd\n0,-65,0\n");
        Assert.Contains("columns 'V_m', 'I_cmd' could each be a single signal: choose one with --signal-column NAME", Assert.Single(r.Diagnostics).Message, StringComparison.Ordinal);
    }
}
