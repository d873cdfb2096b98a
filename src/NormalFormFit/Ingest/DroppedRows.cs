namespace NormalFormFit.Ingest;

/// <summary>Rows of a run file that were not used as samples, by reason.</summary>
/// <param name="Blank">A blank, <c>NaN</c> or non-finite value in a column that is read.</param>
/// <param name="LowQuality">Quality (<c>confidence</c>, <c>likelihood</c>…) below the threshold.</param>
/// <param name="OffOrbit">Positions far from the orbit fitted to the rest (a tracker jumping to another blob).</param>
/// <param name="PhaseJumps">An isolated jump of the phase that comes straight back (not a slip).</param>
public sealed record DroppedRows(int Blank, int LowQuality, int OffOrbit, int PhaseJumps)
{
    /// <summary>Nothing dropped.</summary>
    public static DroppedRows None { get; } = new(0, 0, 0, 0);

    /// <summary>Rows dropped for any reason.</summary>
    public int Total => Blank + LowQuality + OffOrbit + PhaseJumps;
}
