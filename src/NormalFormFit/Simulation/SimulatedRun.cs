namespace NormalFormFit.Simulation;

/// <summary>One simulated recording of phase versus time.</summary>
/// <remarks>The arrays are owned by the record; do not change them. Equality compares array references.</remarks>
/// <param name="ModelName">Name of the model that produced the run.</param>
/// <param name="Mu">Control parameter μ.</param>
/// <param name="Time">Sample times: Time[i] is the double nearest to i × SamplingInterval.</param>
/// <param name="Phase">Recorded phase: true phase plus measurement noise, wrapped to (−π, π] when asked.</param>
/// <param name="TruePhase">Phase of the dynamics (with dynamic noise, without measurement noise), unwrapped.</param>
/// <param name="Revolutions">Whole turns completed, |TruePhase[^1] − TruePhase[0]| / 2π rounded down.</param>
/// <param name="ReachedRevolutions">True when the run stopped because it completed the requested turns.</param>
/// <param name="Options">The options with every default resolved (initial phase, duration, substeps): they reproduce the run.</param>
public sealed record SimulatedRun(
    string ModelName,
    double Mu,
    double[] Time,
    double[] Phase,
    double[] TruePhase,
    int Revolutions,
    bool ReachedRevolutions,
    SimulationOptions Options);
