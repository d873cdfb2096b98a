namespace NormalFormFit.Ingest;

/// <summary>What a run file records.</summary>
public enum RecordingKind
{
    /// <summary>Infer from the columns: a phase column, else x and y columns, else a single column of event times.</summary>
    Auto,

    /// <summary>Time and phase (<c>t,theta</c>).</summary>
    Phase,

    /// <summary>Time and two positions or state variables (<c>t,x,y</c>).</summary>
    Positions,

    /// <summary>One column of event times (spikes, once-per-turn pulses).</summary>
    Events,
}

/// <summary>A phase recording as read: time and phase in radians (not yet unwrapped), split at gaps.</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="Phase">Phase in radians, as recorded (wrapped or not).</param>
/// <param name="SegmentStarts">Index of the first sample of each segment; gaps (missing values) separate segments.</param>
public sealed record PhaseRecording(string File, double[] Time, double[] Phase, int[] SegmentStarts)
{
    /// <summary>The phase was recorded unwrapped: within a segment it is used as is.</summary>
    public bool Unwrapped { get; init; }
}

/// <summary>Positions (x, y) versus time, as read, split at gaps.</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="X">Horizontal position or first state variable.</param>
/// <param name="Y">Vertical position or second state variable.</param>
/// <param name="SegmentStarts">First sample of each segment.</param>
/// <param name="YDown">The y axis points down (image rows).</param>
public sealed record PositionRecording(string File, double[] Time, double[] X, double[] Y, int[] SegmentStarts, bool YDown);

/// <summary>Event times as read (strictly increasing), split at gaps (missing values).</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Times">Event times.</param>
/// <param name="SegmentStarts">First event of each segment; intervals are not taken across a gap.</param>
public sealed record EventRecording(string File, double[] Times, int[] SegmentStarts);

/// <summary>A run file as read: exactly one of the recordings is set, according to <see cref="Kind"/>.</summary>
/// <param name="Kind">Phase, Positions or Events (never Auto).</param>
/// <param name="Phase">Set for <see cref="RecordingKind.Phase"/>.</param>
/// <param name="Positions">Set for <see cref="RecordingKind.Positions"/>.</param>
/// <param name="Events">Set for <see cref="RecordingKind.Events"/>.</param>
public sealed record RunRecording(RecordingKind Kind, PhaseRecording? Phase, PositionRecording? Positions, EventRecording? Events)
{
    /// <summary>Number of samples (or events).</summary>
    public int Count => Phase?.Time.Length ?? Positions?.Time.Length ?? Events?.Times.Length ?? 0;
}
