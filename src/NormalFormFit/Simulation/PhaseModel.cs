namespace NormalFormFit.Simulation;

/// <summary>Builds phase models from user code.</summary>
public static class PhaseModel
{
    /// <summary>A phase model θ̇ = <paramref name="velocity"/>(θ, μ) given as a delegate.</summary>
    /// <param name="name">Short identifier.</param>
    /// <param name="formula">Human-readable equation.</param>
    /// <param name="velocity">f(θ, μ); must be 2π-periodic in θ.</param>
    /// <param name="knownOnset">Onset μc, when known.</param>
    /// <param name="exactPeriod">Closed-form period, when known (null results where it does not turn).</param>
    /// <returns>The model.</returns>
    public static IPhaseModel Create(
        string name,
        string formula,
        Func<double, double, double> velocity,
        double? knownOnset = null,
        Func<double, double?>? exactPeriod = null)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(name);
        ArgumentNullException.ThrowIfNull(formula);
        ArgumentNullException.ThrowIfNull(velocity);
        return new DelegateModel(name, formula, velocity, knownOnset, exactPeriod);
    }

    private sealed class DelegateModel(
        string name,
        string formula,
        Func<double, double, double> velocity,
        double? knownOnset,
        Func<double, double?>? exactPeriod) : IPhaseModel
    {
        public string Name => name;

        public string Formula => formula;

        public double? KnownOnset => knownOnset;

        public double Velocity(double theta, double mu) => velocity(theta, mu);

        public double? ExactPeriod(double mu) => exactPeriod?.Invoke(mu);

        public override string ToString() => formula;
    }
}
