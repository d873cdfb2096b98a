using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

public class TrajectoryTests
{
    [Fact]
    public void FromRecording_WrappedPhase_IsUnwrappedToAContinuousIncreasingPhase()
    {
        // Unwrapping: consecutive samples differ by less than π (common practice, no source).
        var t = Enumerable.Range(0, 1000).Select(i => i * 0.01).ToArray();
        var truth = t.Select(x => 3.0 * x).ToArray();
        var wrapped = truth.Select(x => Math.IEEERemainder(x, 2 * Math.PI)).ToArray();
        var tr = Trajectory.FromRecording(new PhaseRecording("r", t, wrapped, [0]));
        Assert.Equal(1, tr.Direction);
        for (var i = 0; i < t.Length; i++)
        {
            Assert.Equal(truth[i] - truth[0], tr.Phase[i] - tr.Phase[0], 9);
        }
    }

    [Fact]
    public void FromRecording_DecreasingPhase_IsNegatedAndReportsDirection()
    {
        var t = Enumerable.Range(0, 100).Select(i => i * 0.1).ToArray();
        var ph = t.Select(x => -x).ToArray();
        var tr = Trajectory.FromRecording(new PhaseRecording("r", t, ph, [0]));
        Assert.Equal(-1, tr.Direction);
        Assert.True(tr.Phase[^1] > tr.Phase[0]);
    }

    [Fact]
    public void FromRecording_NeverChangesTheRecording()
    {
        var t = new[] { 0.0, 1, 2 };
        var ph = new[] { 3.0, -3.0, 3.0 };
        _ = Trajectory.FromRecording(new PhaseRecording("r", t, ph, [0]));
        Assert.Equal([3.0, -3.0, 3.0], ph);
    }
}
