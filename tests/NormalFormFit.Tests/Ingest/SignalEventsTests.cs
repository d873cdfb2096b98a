using System.Text.Json;
using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

/// <summary>
/// Events in one signal (<see cref="SignalEvents"/>): upward threshold crossings with hysteresis, levels from the signal,
/// glitches and refractory crossings left out, and the signals that cannot give events refused.
/// </summary>
public class SignalEventsTests
{
    private static readonly string Folder = Path.Combine(AppContext.BaseDirectory, "Reference");

    private static SignalRecording ReferenceSignal()
    {
        var r = RunReader.ReadRecording(Path.Combine(Folder, "signal_events_data.csv"));
        return Assert.IsType<SignalRecording>(r.Value);
    }

    private static (double[] Peaks, double[] Crossings, double Threshold, double Step) Reference()
    {
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(Folder, "signal_events_reference.json")));
        var root = json.RootElement;
        double[] Array(string name) => [.. root.GetProperty(name).EnumerateArray().Select(e => e.GetDouble())];
        return (Array("peak_times_ms"), Array("crossing_times_ms"), root.GetProperty("threshold").GetDouble(), root.GetProperty("sample_ms").GetDouble());
    }

    [Fact]
    public void LevelsFromTheSignal_FindEveryPeakThatSciPyFinds_OneEventEach()
    {
        // Reference: scipy.signal.find_peaks(v, height=-20, prominence=30, distance=40), SciPy 1.10.1
        // (Reference/make_signal_events_reference.py). Each peak must follow exactly one of our events by less than
        // the rise time of a spike (0.4 ms in the generated train, so 1 ms is generous), and no event may be spare.
        var (peaks, _, _, _) = Reference();
        var found = SignalEvents.Detect(ReferenceSignal()).Value!;
        var events = found.Events.Times;
        Assert.Equal(peaks.Length, events.Length);
        for (var i = 0; i < peaks.Length; i++)
        {
            Assert.InRange(peaks[i] - events[i], 0, 1.0);
        }

        // The automatic threshold lies between the baseline (-65 mV) and the tips (+20 to +35 mV).
        Assert.InRange(found.Summary.Threshold, -40, -10);
        Assert.InRange(found.Summary.Baseline, -65.1, -64.9);
        Assert.InRange(found.Summary.NoiseSd, 0.35, 0.45); // the generated noise has SD 0.4 mV
    }

    [Fact]
    public void CrossingTimes_AtAGivenThreshold_MatchSciPysInterpolatedCrossings()
    {
        // Reference: scipy.signal.peak_widths(...)[2] (left_ips) at -20 mV: linear interpolation between the samples on
        // either side, as ours. Both read the same 4-decimal numbers, so they agree to rounding (1e-9 ms).
        var (_, crossings, threshold, _) = Reference();
        var found = SignalEvents.Detect(ReferenceSignal(), new SignalEventOptions { Threshold = threshold }).Value!;
        Assert.Equal(crossings.Length, found.Events.Times.Length);
        for (var i = 0; i < crossings.Length; i++)
        {
            Assert.InRange(Math.Abs(found.Events.Times[i] - crossings[i]), 0, 1e-9);
        }
    }

    [Fact]
    public void NoiseOnTheUpstroke_CountsOnce_BecauseOfTheHysteresis()
    {
        // A ramp that crosses 0 three times within 0.2 in height, then falls: one event, at the first crossing.
        double[] v = [-10, -5, -0.1, 0.1, -0.1, 0.1, -0.05, 5, 10, 10, 5, -10, -10, -10];
        var s = Signal(v);
        var found = SignalEvents.Detect(s, new SignalEventOptions { Threshold = 0, Hysteresis = 2, RefractoryTime = 0 }).Value!;
        Assert.Equal([2.5], found.Events.Times); // -0.1 → 0.1 between t = 2 and 3: crossing at 2.5 (linear interpolation)
    }

    [Fact]
    public void ACrossingOfOneSample_IsAGlitch_AndIsLeftOut()
    {
        double[] v = [-10, -10, 10, -10, -10, -10, 10, 10, 10, -10, -10];
        var found = SignalEvents.Detect(Signal(v), new SignalEventOptions { Threshold = 0 }).Value!;
        Assert.Equal([5.5], found.Events.Times);
        Assert.Equal(1, found.Summary.Glitches);
    }

    [Fact]
    public void ACrossingSoonerThanTheRefractoryTime_BelongsToTheLastEvent()
    {
        double[] v = [-10, 10, 10, -10, 10, 10, -10, -10, -10, -10, 10, 10, -10];
        var found = SignalEvents.Detect(Signal(v), new SignalEventOptions { Threshold = 0, Hysteresis = 5, RefractoryTime = 5 }).Value!;
        Assert.Equal([0.5, 9.5], found.Events.Times);
        Assert.Equal(1, found.Summary.WithinRefractory);
    }

    [Fact]
    public void ASignalThatNeverRisesClearOfItsNoise_HasNoEvents_AndIsNotAnError()
    {
        var random = new Random(5);
        var v = Enumerable.Range(0, 20000).Select(_ => -65 + Gauss(random)).ToArray();
        var found = SignalEvents.Detect(Signal(v));
        Assert.True(found.Succeeded);
        Assert.Empty(found.Value!.Events.Times);
        Assert.True(double.IsNaN(found.Value.Summary.Threshold));
    }

    [Fact]
    public void AConstantSignal_IsRefused_NamingTheColumn()
    {
        var found = SignalEvents.Detect(Signal([.. Enumerable.Repeat(-65.0, 100)]));
        var d = Assert.Single(found.Diagnostics);
        Assert.Equal("signal-constant", d.Code);
        Assert.Contains("column 'Vm_mV' is constant (-65)", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void AClippedSignal_IsRefused()
    {
        // The reference train with every sample above 0 mV cut to 0 mV, as an amplifier out of range would.
        var s = ReferenceSignal();
        var clipped = s with { Values = [.. s.Values.Select(x => Math.Min(x, 0))] };
        var d = Assert.Single(SignalEvents.Detect(clipped).Diagnostics);
        Assert.Equal("signal-clipped", d.Code);
        Assert.Contains("sits at its maximum, 0", d.Message, StringComparison.Ordinal);

        // The same train not clipped is accepted: the check does not fire on ordinary peaks.
        Assert.True(SignalEvents.Detect(s).Succeeded);
    }

    [Fact]
    public void EventsAreNotTimedAcrossAGap_InTheSignal()
    {
        // Two segments (a gap between t = 6 and 100): intervals must not span it.
        double[] v = [-10, 10, 10, -10, -10, 10, 10, -10, 10, 10, -10];
        double[] t = [0, 1, 2, 3, 4, 5, 6, 100, 101, 102, 103];
        var s = new SignalRecording("run.csv", t, v, [0, 7]) { SignalColumnName = "Vm_mV" };
        var found = SignalEvents.Detect(s, new SignalEventOptions { Threshold = 0, Hysteresis = 5, RefractoryTime = 0 }).Value!;
        Assert.Equal([0.5, 4.5, 100.5], found.Events.Times);
        Assert.Equal([0, 2], found.Events.SegmentStarts);
    }

    private static SignalRecording Signal(double[] v) =>
        new("run.csv", [.. Enumerable.Range(0, v.Length).Select(i => (double)i)], v, [0]) { SignalColumnName = "Vm_mV" };

    private static double Gauss(Random r) => Math.Sqrt(-2 * Math.Log(1 - r.NextDouble())) * Math.Cos(2 * Math.PI * r.NextDouble());
}
