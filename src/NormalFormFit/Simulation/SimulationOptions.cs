using System.Globalization;

namespace NormalFormFit.Simulation;

/// <summary>Settings of one simulated run. Defaults work for the built-in models away from onset.</summary>
/// <remarks>
/// Call <see cref="Validate"/> before work; <see cref="Simulator.Run"/> throws <see cref="ArgumentException"/>
/// listing every problem when it is not empty.
/// </remarks>
public sealed record SimulationOptions
{
    /// <summary>Largest number of samples one run may hold (three arrays of doubles: 4.8 GB at this size).</summary>
    public const long MaxSamples = 200_000_000;

    /// <summary>Duration used when <see cref="MaxDuration"/> is null and the model's period is unknown.</summary>
    public const double FallbackMaxDuration = 1e4;

    /// <summary>Control parameter μ.</summary>
    public double Mu { get; init; }

    /// <summary>The run stops at the first sample where the phase has moved this many whole turns from its start.</summary>
    public int Revolutions { get; init; } = 10;

    /// <summary>Time between recorded samples.</summary>
    public double SamplingInterval { get; init; } = 0.01;

    /// <summary>Standard deviation σ (radians) of Gaussian noise added to each recorded phase; 0 for none.</summary>
    public double MeasurementNoise { get; init; }

    /// <summary>Phase diffusion D of the dynamics dθ = f dt + √(2D) dW (radians² per time unit); 0 for none.</summary>
    public double DynamicNoise { get; init; }

    /// <summary>Seed of every random draw of the run (initial phase, dynamic and measurement noise).</summary>
    public int Seed { get; init; } = 1;

    /// <summary>Phase at t = 0 (radians); null draws it uniformly from (−π, π] with <see cref="Seed"/>.</summary>
    public double? InitialPhase { get; init; }

    /// <summary>
    /// Longest run, in time units, for runs that do not reach <see cref="Revolutions"/> (below onset, or very
    /// near it). Null: three times the expected duration Revolutions × period when the model knows its period at
    /// μ, but at least <see cref="FallbackMaxDuration"/>; otherwise <see cref="FallbackMaxDuration"/>.
    /// The margin of three covers runs that noise slows down.
    /// </summary>
    public double? MaxDuration { get; init; }

    /// <summary>
    /// Integration steps per sampling interval. Null chooses the smallest count, at least 2, such that one step h
    /// moves the phase by at most 0.02 rad and stays well inside the local time scale (h·max(|f|, |∂f/∂θ|) ≤ 0.02)
    /// for RK4; with dynamic noise, Euler–Maruyama is only first order, so the bound is 0.01 and the noise kick
    /// √(2Dh) is kept ≤ 0.1 rad. At these steps RK4's period error is below 1e-9 relative and Euler–Maruyama's
    /// distortion of the field, of order h·|∂f/∂θ|/2, is below 0.5%. See <see cref="Simulator.DefaultSubsteps"/>.
    /// </summary>
    public int? Substeps { get; init; }

    /// <summary>True (default): the recorded phase is wrapped to (−π, π], as real sensors give it.</summary>
    public bool WrapPhase { get; init; } = true;

    /// <summary>Problems that make these options unusable; empty when they are fine.</summary>
    /// <returns>One plain sentence per problem.</returns>
    public IReadOnlyList<string> Validate()
    {
        var problems = new List<string>();
        var ic = CultureInfo.InvariantCulture;
        if (!double.IsFinite(Mu))
        {
            problems.Add(string.Create(ic, $"Mu must be a finite number (got {Mu})."));
        }

        if (Revolutions < 1)
        {
            problems.Add(string.Create(ic, $"Revolutions must be at least 1 (got {Revolutions})."));
        }

        if (!(SamplingInterval > 0.0) || !double.IsFinite(SamplingInterval))
        {
            problems.Add(string.Create(ic, $"SamplingInterval must be positive and finite (got {SamplingInterval})."));
        }

        if (!(MeasurementNoise >= 0.0) || !double.IsFinite(MeasurementNoise))
        {
            problems.Add(string.Create(ic, $"MeasurementNoise must be zero or positive and finite (got {MeasurementNoise})."));
        }

        if (!(DynamicNoise >= 0.0) || !double.IsFinite(DynamicNoise))
        {
            problems.Add(string.Create(ic, $"DynamicNoise must be zero or positive and finite (got {DynamicNoise})."));
        }

        if (InitialPhase is { } phase && !double.IsFinite(phase))
        {
            problems.Add(string.Create(ic, $"InitialPhase must be finite when given (got {phase})."));
        }

        if (MaxDuration is { } duration)
        {
            if (!(duration > 0.0) || !double.IsFinite(duration))
            {
                problems.Add(string.Create(ic, $"MaxDuration must be positive and finite when given (got {duration})."));
            }
            else if (SamplingInterval > 0.0 && duration / SamplingInterval > MaxSamples)
            {
                problems.Add(string.Create(
                    ic,
                    $"MaxDuration / SamplingInterval = {duration / SamplingInterval:G3} samples exceeds the limit of {MaxSamples:G3}; raise SamplingInterval or lower MaxDuration."));
            }
        }

        if (Substeps is { } substeps && substeps < 1)
        {
            problems.Add(string.Create(ic, $"Substeps must be at least 1 when given (got {substeps})."));
        }

        return problems;
    }

    /// <summary>Throws <see cref="ArgumentException"/> naming every problem found by <see cref="Validate"/>.</summary>
    /// <exception cref="ArgumentException">The options are not usable.</exception>
    public void ThrowIfInvalid()
    {
        var problems = Validate();
        if (problems.Count > 0)
        {
            throw new ArgumentException("Invalid simulation options: " + string.Join(" ", problems));
        }
    }
}
