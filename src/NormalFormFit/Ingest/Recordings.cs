namespace NormalFormFit.Ingest;

/// <summary>What a run file records.</summary>
public enum RecordingKind
{
    /// <summary>Time and phase (<c>t,theta</c>).</summary>
    Phase,

    /// <summary>Time and two positions or state variables (<c>t,x,y</c>).</summary>
    Positions,

    /// <summary>One column of event times (spikes, once-per-turn pulses).</summary>
    Events,

    /// <summary>Time and one signal (a membrane voltage, a light level, one coordinate): events are detected in it.</summary>
    Signal,
}

/// <summary>What the user asks run files to be read as: one <see cref="RecordingKind"/>, or inferred from the columns.</summary>
public enum RecordingKindOption
{
    /// <summary>Infer from the columns: a phase column, else x and y columns, else a single column of event times.</summary>
    Auto,

    /// <summary>Time and phase (<c>t,theta</c>).</summary>
    Phase,

    /// <summary>Time and two positions or state variables (<c>t,x,y</c>).</summary>
    Positions,

    /// <summary>One column of event times (spikes, once-per-turn pulses).</summary>
    Events,

    /// <summary>Time and one signal (<c>time_ms,Vm_mV</c>): events are detected in it.</summary>
    Signal,
}

/// <summary>
/// A run file as read: one derived record per <see cref="RecordingKind"/> (<see cref="PhaseRecording"/>,
/// <see cref="PositionRecording"/>, <see cref="EventRecording"/>, <see cref="SignalRecording"/>), each holding only its own data.
/// </summary>
/// <remarks>
/// The hierarchy is closed: only this assembly can derive from it (the constructor is private protected), so a switch
/// over the kinds is complete; a new kind of recording is a new derived record here.
/// </remarks>
public abstract record RunRecording
{
    /// <summary>Sets the file the recording came from.</summary>
    private protected RunRecording(string file) => File = file;

    /// <summary>Path as given by the user.</summary>
    public string File { get; init; }

    /// <summary>What the recording holds.</summary>
    public abstract RecordingKind Kind { get; }

    /// <summary>Number of samples (or events).</summary>
    public abstract int Count { get; }

    /// <summary>Unit of the times (<c>s</c>, <c>ms</c>…) from the header or the options; null when unknown.</summary>
    public string? TimeUnit { get; init; }

    /// <summary>Rows of the file not used as samples, by reason.</summary>
    public DroppedRows Dropped { get; init; } = DroppedRows.None;
}

/// <summary>A phase recording as read: time and phase in radians (not yet unwrapped), split at gaps.</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="Phase">Phase in radians, as recorded (wrapped or not).</param>
/// <param name="SegmentStarts">Index of the first sample of each segment; gaps (missing values) separate segments.</param>
public sealed record PhaseRecording(string File, double[] Time, double[] Phase, int[] SegmentStarts) : RunRecording(File)
{
    /// <summary>The phase was recorded unwrapped: within a segment it is used as is.</summary>
    public bool Unwrapped { get; init; }

    /// <summary>Header name of the phase column (for messages); null when not read from a file with a header.</summary>
    public string? PhaseColumnName { get; init; }

    /// <inheritdoc/>
    public override RecordingKind Kind => RecordingKind.Phase;

    /// <inheritdoc/>
    public override int Count => Time.Length;
}

/// <summary>Positions (x, y) versus time, as read, split at gaps.</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="X">Horizontal position or first state variable.</param>
/// <param name="Y">Vertical position or second state variable.</param>
/// <param name="SegmentStarts">First sample of each segment.</param>
/// <param name="YDown">The y axis points down (image rows).</param>
public sealed record PositionRecording(string File, double[] Time, double[] X, double[] Y, int[] SegmentStarts, bool YDown) : RunRecording(File)
{
    /// <inheritdoc/>
    public override RecordingKind Kind => RecordingKind.Positions;

    /// <inheritdoc/>
    public override int Count => Time.Length;
}

/// <summary>Event times as read (strictly increasing), split at gaps (missing values).</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Times">Event times.</param>
/// <param name="SegmentStarts">First event of each segment; intervals are not taken across a gap.</param>
public sealed record EventRecording(string File, double[] Times, int[] SegmentStarts) : RunRecording(File)
{
    /// <inheritdoc/>
    public override RecordingKind Kind => RecordingKind.Events;

    /// <inheritdoc/>
    public override int Count => Times.Length;
}

/// <summary>One signal versus time (a membrane voltage, a photogate output), as read, split at gaps.</summary>
/// <param name="File">Path as given by the user.</param>
/// <param name="Time">Sample times, strictly increasing.</param>
/// <param name="Values">The signal, in its own unit.</param>
/// <param name="SegmentStarts">First sample of each segment; events are not timed across a gap.</param>
public sealed record SignalRecording(string File, double[] Time, double[] Values, int[] SegmentStarts) : RunRecording(File)
{
    /// <summary>Header name of the signal column (for messages and the report).</summary>
    public string SignalColumnName { get; init; } = "signal";

    /// <inheritdoc/>
    public override RecordingKind Kind => RecordingKind.Signal;

    /// <inheritdoc/>
    public override int Count => Time.Length;
}
