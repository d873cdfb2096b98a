namespace NormalFormFit.Ingest;

/// <summary>Unit of a recorded phase column.</summary>
public enum PhaseUnit
{
    /// <summary>Radians (2π a turn).</summary>
    Radians,

    /// <summary>Degrees (360 a turn).</summary>
    Degrees,

    /// <summary>Turns (1 a turn).</summary>
    Turns,
}
