namespace NormalFormFit.Simulation;

/// <summary>
/// A one-dimensional phase model θ̇ = f(θ, μ) on the circle, with what is known about it in closed form.
/// </summary>
/// <remarks>
/// <see cref="Velocity"/> must be 2π-periodic in θ and finite for finite arguments. The simulator samples it
/// on a grid to choose its step, so it should be cheap and free of side effects.
/// </remarks>
public interface IPhaseModel
{
    /// <summary>Short identifier used on the command line and in manifests, e.g. <c>rotor</c>.</summary>
    string Name { get; }

    /// <summary>The equation in human-readable form, e.g. <c>dθ/dt = μ − sin θ</c>.</summary>
    string Formula { get; }

    /// <summary>The onset μc where the model starts to turn, when known.</summary>
    double? KnownOnset { get; }

    /// <summary>Phase velocity f(θ, μ) in radians per time unit.</summary>
    /// <param name="theta">Phase in radians (any real value).</param>
    /// <param name="mu">Control parameter.</param>
    double Velocity(double theta, double mu);

    /// <summary>
    /// Period of the noise-free motion at <paramref name="mu"/>, or null where it is unknown or the model
    /// does not turn there.
    /// </summary>
    double? ExactPeriod(double mu);
}
