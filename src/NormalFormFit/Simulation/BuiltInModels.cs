namespace NormalFormFit.Simulation;

/// <summary>The phase models that ship with the library.</summary>
public static class BuiltInModels
{
    /// <summary>
    /// Driven overdamped rotor θ̇ = μ − sin θ (Adler 1946). Turns for |μ| &gt; 1 with period 2π/√(μ² − 1);
    /// onset μc = 1.
    /// </summary>
    public static IPhaseModel Rotor { get; } = new RotorModel();

    /// <summary>
    /// Theta neuron θ̇ = 1 − cos θ + (1 + cos θ)μ (Ermentrout &amp; Kopell 1986). Turns for μ &gt; 0 with
    /// period π/√μ; onset μc = 0.
    /// </summary>
    public static IPhaseModel ThetaNeuron { get; } = new ThetaNeuronModel();

    /// <summary>All built-in models, in a stable order.</summary>
    public static IReadOnlyList<IPhaseModel> All { get; } = [Rotor, ThetaNeuron];

    /// <summary>Finds a built-in model by its <see cref="IPhaseModel.Name"/> (ordinal, case-insensitive).</summary>
    /// <param name="name">The name, e.g. <c>rotor</c> or <c>theta-neuron</c>.</param>
    /// <param name="model">The model, when found.</param>
    /// <returns>True when a model of that name exists.</returns>
    public static bool TryGet(string name, [System.Diagnostics.CodeAnalysis.NotNullWhen(true)] out IPhaseModel? model)
    {
        ArgumentNullException.ThrowIfNull(name);
        foreach (var candidate in All)
        {
            if (string.Equals(candidate.Name, name.Trim(), StringComparison.OrdinalIgnoreCase))
            {
                model = candidate;
                return true;
            }
        }

        model = null;
        return false;
    }

    /// <summary>Adler (1946): θ̇ = μ − sin θ; ∮dθ/(μ − sin θ) = 2π/√(μ² − 1) for |μ| &gt; 1.</summary>
    private sealed class RotorModel : IPhaseModel
    {
        public string Name => "rotor";

        public string Formula => "dθ/dt = μ − sin θ";

        public double? KnownOnset => 1.0;

        public double Velocity(double theta, double mu) => mu - Math.Sin(theta);

        // For μ < −1 the rotor turns backwards with the same period.
        public double? ExactPeriod(double mu) =>
            Math.Abs(mu) > 1.0 ? 2.0 * Math.PI / Math.Sqrt((mu * mu) - 1.0) : null;

        public override string ToString() => Formula;
    }

    /// <summary>
    /// Ermentrout &amp; Kopell (1986): θ̇ = 1 − cos θ + (1 + cos θ)μ; with x = tan(θ/2) it is ẋ = μ + x²,
    /// whose passage over the whole line takes π/√μ for μ &gt; 0.
    /// </summary>
    private sealed class ThetaNeuronModel : IPhaseModel
    {
        public string Name => "theta-neuron";

        public string Formula => "dθ/dt = 1 − cos θ + (1 + cos θ)μ";

        public double? KnownOnset => 0.0;

        public double Velocity(double theta, double mu)
        {
            var c = Math.Cos(theta);
            return 1.0 - c + ((1.0 + c) * mu);
        }

        public double? ExactPeriod(double mu) => mu > 0.0 ? Math.PI / Math.Sqrt(mu) : null;

        public override string ToString() => Formula;
    }
}
