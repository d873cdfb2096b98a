namespace NormalFormFit.Simulation;

/// <summary>One row of a manifest: a run file and the control parameter it was recorded at.</summary>
/// <param name="File">Path of the run file relative to the manifest (use '/' as separator).</param>
/// <param name="Param">Control parameter μ of the run.</param>
/// <param name="Label">Optional free text, e.g. where the run came from.</param>
public sealed record ManifestEntry(string File, double Param, string? Label = null);
