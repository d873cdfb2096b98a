using System.Globalization;
using System.Text;
using FsCheck;
using FsCheck.Xunit;
using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Ingest;

/// <summary>
/// Properties: no input, however broken, makes the reader (or the per-run analysis after it) throw; whatever it
/// accepts satisfies the reader's promises (finite, strictly increasing times; valid segments).
/// </summary>
public class ReaderPropertyTests
{
    private const string Punctuation = "\n,;\t .-eN#";

    private static readonly Lazy<byte[][]> GoodFiles = new(() =>
    {
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.3, Revolutions = 3, SamplingInterval = 0.05, MeasurementNoise = 0.01, Seed = 3 });
        var track = CameraView.Project(sim, 1.0, new CameraOptions { Seed = 4 });
        var phase = new StringBuilder("# rotor\r\nt,theta\r\n");
        var positions = new StringBuilder("\uFEFFt;x;y\n");
        var events = new StringBuilder("pulse\n");
        for (var i = 0; i < sim.Time.Length; i++)
        {
            phase.Append(CultureInfo.InvariantCulture, $"{sim.Time[i]:R},{sim.Phase[i]:R}\r\n");
        }

        for (var i = 0; i < track.Time.Length; i++)
        {
            positions.Append(CultureInfo.InvariantCulture, $"{track.Time[i]:R};{track.X[i]:F2};{track.Y[i]:F2}\n");
        }

        foreach (var e in CameraView.CrossingTimes(sim.Time, sim.TruePhase, 0))
        {
            events.Append(CultureInfo.InvariantCulture, $"{e:R}\n");
        }

        return [Encoding.UTF8.GetBytes(phase.ToString()), Encoding.UTF8.GetBytes(positions.ToString()), Encoding.UTF8.GetBytes(events.ToString())];
    });

    [Property(MaxTest = 300)]
    public void RandomBytes_NeverCrashTheReader(byte[] bytes)
    {
        Check(bytes, analyse: false);
    }

    [Property(MaxTest = 150)]
    public void RandomEditsOfGoodFiles_NeverCrashTheReaderOrTheRunAnalysis(byte which, (int Position, byte Value, byte Operation)[] edits)
    {
        var bytes = new List<byte>(GoodFiles.Value[which % 3]);
        foreach (var (position, value, operation) in edits ?? [])
        {
            if (bytes.Count == 0)
            {
                break;
            }

            var p = (int)((uint)position % (uint)bytes.Count);
            switch (operation % 4)
            {
                case 0: bytes[p] = value; break;
                case 1: bytes.Insert(p, value); break;
                case 2: bytes.RemoveAt(p); break;
                default: bytes.Insert(p, (byte)Punctuation[value % Punctuation.Length]); break;
            }
        }

        Check([.. bytes], analyse: true);
    }

    private static void Check(byte[] bytes, bool analyse)
    {
        foreach (var kind in Enum.GetValues<RecordingKindOption>())
        {
            using var stream = new MemoryStream(bytes, writable: false);
            var loaded = RunReader.ReadRecording(stream, "fuzz.csv", new RunReadOptions { Kind = kind });
            if (loaded.Value is not { } rec)
            {
                Assert.Contains(loaded.Diagnostics, d => d.Severity == Severity.Error && d.Message.Length > 0);
                continue;
            }

            var (time, segments) = rec switch
            {
                PhaseRecording p => (p.Time, p.SegmentStarts),
                PositionRecording p => (p.Time, p.SegmentStarts),
                EventRecording e => (e.Times, e.SegmentStarts),
                SignalRecording s => (s.Time, s.SegmentStarts),
                _ => throw new InvalidOperationException($"a recording of kind {rec.Kind} the test does not know"),
            };
            // An event file may hold a header and no times (a run that did not fire), and then says so.
            if (rec is EventRecording && time.Length == 0)
            {
                Assert.Contains(loaded.Diagnostics, d => d.Code == "no-events");
                Assert.False(RecordingAnalyzer.Analyze(rec, 1.0, "fuzz.csv", null, null, loaded.Diagnostics).Value!.IsTurning);
                continue;
            }

            Assert.NotEmpty(time);
            Assert.All(time, t => Assert.True(double.IsFinite(t)));
            for (var i = 1; i < time.Length; i++)
            {
                Assert.True(time[i] > time[i - 1]);
            }

            Assert.Equal(0, segments[0]);
            Assert.All(segments, s => Assert.InRange(s, 0, time.Length - 1));
            if (analyse)
            {
                // Must not throw; a failure comes back as diagnostics.
                var run = RecordingAnalyzer.Analyze(rec, 1.0, "fuzz.csv", null, null, loaded.Diagnostics);
                Assert.True(run.Value is not null || run.Diagnostics.Any(d => d.Severity == Severity.Error));
            }
        }
    }
}
