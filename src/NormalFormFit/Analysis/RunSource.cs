using NormalFormFit.Ingest;

namespace NormalFormFit.Analysis;

/// <summary>
/// Where a run's trajectory came from: what the file recorded, the orbit its phase was taken from (positions), and what
/// reading it reported. The run's result takes its input kind and orbit from here, puts these diagnostics before its
/// own, and the flags this evidence raises after its own.
/// </summary>
/// <param name="Kind">What the run file recorded.</param>
/// <param name="Orbit">The ellipse fitted to the orbit (positions); null otherwise.</param>
/// <param name="Diagnostics">Diagnostics of reading the file and of fitting the orbit, already naming the run file.</param>
public sealed record RunSource(RecordingKind Kind, OrbitSummary? Orbit, IReadOnlyList<Diagnostic> Diagnostics)
{
    /// <summary>Rows of the run file not used as samples, by reason.</summary>
    public DroppedRows Dropped { get; init; } = DroppedRows.None;

    /// <summary>Unit of the run's time column (for rates in messages, e.g. κ per ms); null when not known.</summary>
    public string? TimeUnit { get; init; }

    /// <summary>A phase recording read without remarks.</summary>
    public static RunSource Phase { get; } = new(RecordingKind.Phase, null, []);

    /// <summary>
    /// The flags the input raises: <see cref="RunFlag.NotAnEllipse"/> when the orbit is far from an ellipse (the orbit
    /// fit's <c>not-an-ellipse</c> warning says so) and <see cref="RunFlag.LargeGaps"/> when the reader split the run at
    /// gaps it could not follow the phase across (the <c>large-gaps</c> warning).
    /// </summary>
    public IReadOnlyList<RunFlag> Flags
    {
        get
        {
            var flags = new List<RunFlag>();
            if (Orbit is { IsEllipse: false })
            {
                flags.Add(RunFlag.NotAnEllipse);
            }

            if (Diagnostics.Any(d => d.Code == "large-gaps"))
            {
                flags.Add(RunFlag.LargeGaps);
            }

            return flags;
        }
    }
}
