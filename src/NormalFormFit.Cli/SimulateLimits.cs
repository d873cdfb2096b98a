using System.Globalization;
using NormalFormFit.Simulation;

namespace NormalFormFit.Cli;

/// <summary>
/// The documented ranges of simulate's options (docs/data-safety.md, clause 7; README), checked before any work so
/// that a message names the option, never an internal property.
/// </summary>
internal static class SimulateLimits
{
    /// <summary>Fewest revolutions per run.</summary>
    public const int MinRevolutions = 1;

    /// <summary>Most revolutions per run (each run is held in memory: 10⁶ turns at 100 samples a turn is 10⁸ samples).</summary>
    public const int MaxRevolutions = 1_000_000;

    /// <summary>Smallest sampling interval.</summary>
    public const double MinDt = 1e-6;

    /// <summary>Largest sampling interval (the built-in models turn in times of order 1 to 100).</summary>
    public const double MaxDt = 100;

    /// <summary>Largest measurement noise σ in radians (beyond a turn, the phase is noise).</summary>
    public const double MaxNoise = 10;

    /// <summary>Largest phase diffusion D.</summary>
    public const double MaxDiffusion = 100;

    /// <summary>Null when the options are in range; else the message naming the first option out of range.</summary>
    public static string? Check(int revolutions, double dt, double noise, double diffusion)
    {
        var ic = CultureInfo.InvariantCulture;
        if (revolutions is < MinRevolutions or > MaxRevolutions)
        {
            return string.Create(ic, $"--revolutions must be from {MinRevolutions} to {MaxRevolutions} (got {revolutions})");
        }

        if (!(dt >= MinDt && dt <= MaxDt))
        {
            return string.Create(ic, $"--dt must be from {MinDt:G} to {MaxDt:G} (got {dt:G})");
        }

        if (!(noise >= 0 && noise <= MaxNoise))
        {
            return string.Create(ic, $"--noise must be from 0 to {MaxNoise:G} radians (got {noise:G})");
        }

        if (!(diffusion >= 0 && diffusion <= MaxDiffusion))
        {
            return string.Create(ic, $"--diffusion must be from 0 to {MaxDiffusion:G} (got {diffusion:G})");
        }

        return null;
    }

    /// <summary>Null when θ̇ is finite on a grid of 256 phases at every μ; else where it is not ("θ = …, μ = …").</summary>
    public static string? NotFinite(IPhaseModel model, IReadOnlyList<double> mus)
    {
        foreach (var mu in mus)
        {
            for (var k = 0; k < 256; k++)
            {
                var theta = (2 * Math.PI * k / 256) - Math.PI;
                if (!double.IsFinite(model.Velocity(theta, mu)))
                {
                    return string.Create(CultureInfo.InvariantCulture, $"θ = {theta:G4}, μ = {mu:G6}");
                }
            }
        }

        return null;
    }

    /// <summary>The reason a simulation could not run, in the options' terms.</summary>
    public static string Why(Exception? e) => e?.Message switch
    {
        { } m when m.Contains("samples", StringComparison.Ordinal) => "a run would need more samples than fit in memory",
        { } m when m.Contains("steps per sample", StringComparison.Ordinal) => "a sampling interval this long needs too many integration steps per sample",
        _ => "the numbers overflow",
    };
}
