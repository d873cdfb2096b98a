using NormalFormFit.Numerics;

namespace NormalFormFit.Simulation;

/// <summary>
/// A two-dimensional (or second-order) system ẋ = F(x, μ) whose recorded phase is a function of its state, for
/// onsets that a one-dimensional phase model cannot produce (homoclinic, Hopf).
/// </summary>
public interface IPlanarSystem
{
    /// <summary>Short identifier, e.g. <c>pendulum</c>.</summary>
    string Name { get; }

    /// <summary>The equations in human-readable form.</summary>
    string Formula { get; }

    /// <summary>State derivative F(x, μ): (<paramref name="rate0"/>, <paramref name="rate1"/>) at state (<paramref name="x0"/>, <paramref name="x1"/>).</summary>
    void Rate(double x0, double x1, double mu, out double rate0, out double rate1);

    /// <summary>The unwrapped-continuous recorded phase of a state (the caller unwraps).</summary>
    double Phase(double x0, double x1);

    /// <summary>A state from which the system reaches its turning motion at <paramref name="mu"/>.</summary>
    (double X0, double X1) Start(double mu);
}

/// <summary>
/// Damped pendulum with constant torque, θ̈ + γθ̇ + sin θ = τ (μ = τ), state (θ, θ̇), recorded phase θ.
/// For small γ and τ &lt; 1 a running orbit coexists with the stable equilibrium for τ &gt; τc(γ); it is born in a
/// homoclinic bifurcation of the saddle, τc ≈ 4γ/π for small γ (Melnikov estimate; Strogatz, Nonlinear Dynamics
/// and Chaos, 2nd ed., §8.5). Its period diverges as −(1/λ)ln(τ − τc), λ the saddle's unstable eigenvalue.
/// </summary>
/// <param name="Damping">γ &gt; 0.</param>
public sealed record DampedPendulum(double Damping) : IPlanarSystem
{
    /// <inheritdoc/>
    public string Name => "pendulum";

    /// <inheritdoc/>
    public string Formula => "d²θ/dt² + γ dθ/dt + sin θ = μ";

    /// <inheritdoc/>
    public void Rate(double x0, double x1, double mu, out double rate0, out double rate1)
    {
        rate0 = x1;
        rate1 = mu - (Damping * x1) - Math.Sin(x0);
    }

    /// <inheritdoc/>
    public double Phase(double x0, double x1) => x0;

    /// <summary>Starts above the running orbit (θ̇ = 2μ/γ), from where the damping brings it down onto the orbit.</summary>
    public (double X0, double X1) Start(double mu) => (0.0, 2.0 * Math.Max(mu, 0.1) / Damping);

    /// <summary>The saddle's unstable eigenvalue λ = (−γ + √(γ² + 4√(1 − τ²)))/2, for |τ| &lt; 1 (linearisation).</summary>
    public double SaddleExpansion(double mu) => 0.5 * (-Damping + Math.Sqrt((Damping * Damping) + (4.0 * Math.Sqrt(1.0 - (mu * mu)))));
}

/// <summary>
/// Stuart–Landau oscillator ż = (μ + iω)z − (1 + ic)|z|²z, z = x + iy (the normal form of a supercritical Hopf
/// bifurcation; Kuramoto, Chemical Oscillations, Waves, and Turbulence, 1984, §2.2). For μ &gt; 0 the limit cycle has
/// radius √μ and period 2π/(ω − cμ): finite at onset μc = 0, with amplitude growing instead. Recorded phase
/// atan2(y, x) about the origin (the cycle's centre).
/// </summary>
/// <param name="Frequency">ω.</param>
/// <param name="Shear">c (amplitude-dependent frequency).</param>
public sealed record StuartLandau(double Frequency, double Shear) : IPlanarSystem
{
    /// <inheritdoc/>
    public string Name => "stuart-landau";

    /// <inheritdoc/>
    public string Formula => "dz/dt = (μ + iω)z − (1 + ic)|z|²z";

    /// <inheritdoc/>
    public void Rate(double x0, double x1, double mu, out double rate0, out double rate1)
    {
        var r2 = (x0 * x0) + (x1 * x1);
        rate0 = (mu * x0) - (Frequency * x1) - (r2 * (x0 - (Shear * x1)));
        rate1 = (mu * x1) + (Frequency * x0) - (r2 * (x1 + (Shear * x0)));
    }

    /// <inheritdoc/>
    public double Phase(double x0, double x1) => Math.Atan2(x1, x0);

    /// <summary>On the limit cycle (radius √μ) for μ &gt; 0; otherwise at radius 0.1.</summary>
    public (double X0, double X1) Start(double mu) => (mu > 0 ? Math.Sqrt(mu) : 0.1, 0.0);

    /// <summary>Period 2π/(ω − cμ) of the limit cycle for μ &gt; 0.</summary>
    public double Period(double mu) => 2.0 * Math.PI / (Frequency - (Shear * mu));
}

/// <summary>Synthetic phase recordings from a planar system: RK4 with a fixed step, measurement noise on the phase.</summary>
public static class PlanarSimulator
{
    /// <summary>
    /// Simulates <paramref name="system"/> at <c>options.Mu</c>. The system first runs for <paramref name="warmUp"/>
    /// time units unrecorded (so that transients from <see cref="IPlanarSystem.Start"/> die out), then is recorded
    /// every SamplingInterval until the phase has moved <c>options.Revolutions</c> whole turns or MaxDuration
    /// (default 10⁴) has passed. Classical RK4 with <c>options.Substeps</c> steps per sample (default 20). Measurement
    /// noise σ = <c>options.MeasurementNoise</c> from the seeded stream 1 of <c>options.Seed</c>. Dynamic noise is not
    /// supported (must be 0). Cost O(samples × substeps).
    /// </summary>
    /// <exception cref="ArgumentException">The options are invalid or ask for dynamic noise.</exception>
    public static SimulatedRun Run(IPlanarSystem system, SimulationOptions options, double warmUp = 200.0)
    {
        ArgumentNullException.ThrowIfNull(system);
        ArgumentNullException.ThrowIfNull(options);
        options.ThrowIfInvalid();
        if (options.DynamicNoise != 0.0)
        {
            throw new ArgumentException("The planar simulator does not support dynamic noise.", nameof(options));
        }

        var mu = options.Mu;
        var m = options.Substeps ?? 20;
        var h = options.SamplingInterval / m;
        var maxDuration = options.MaxDuration ?? SimulationOptions.FallbackMaxDuration;
        var lastIndex = (long)Math.Floor((maxDuration / options.SamplingInterval) + 1e-9);
        var (x0, x1) = system.Start(mu);
        var field = new PlanarSystemField(system, mu);
        var warmSteps = (long)Math.Ceiling(warmUp / h);
        for (long s = 0; s < warmSteps; s++)
        {
            OdeStepper.RungeKutta4(field, h, ref x0, ref x1);
        }

        var phases = new List<double> { system.Phase(x0, x1) };
        var unwrapped = phases[0];
        var start = unwrapped;
        var target = 2.0 * Math.PI * options.Revolutions;
        var reached = false;
        for (long i = 1; i <= lastIndex; i++)
        {
            var before = system.Phase(x0, x1);
            for (var s = 0; s < m; s++)
            {
                OdeStepper.RungeKutta4(field, h, ref x0, ref x1);
            }

            var d = system.Phase(x0, x1) - before;
            d -= 2.0 * Math.PI * Math.Round(d / (2.0 * Math.PI));
            unwrapped += d;
            phases.Add(unwrapped);
            if (Math.Abs(unwrapped - start) >= target)
            {
                reached = true;
                break;
            }
        }

        var truePhase = phases.ToArray();
        var time = new double[truePhase.Length];
        var noise = options.MeasurementNoise > 0 ? GaussianSource.Create(options.Seed, stream: 1) : null;
        var recorded = new double[truePhase.Length];
        for (var i = 0; i < time.Length; i++)
        {
            time[i] = i * options.SamplingInterval;
            var v = truePhase[i] + (noise is null ? 0.0 : options.MeasurementNoise * noise.Next());
            recorded[i] = options.WrapPhase ? Simulator.Wrap(v) : v;
        }

        var turns = (int)Math.Floor(Math.Abs(truePhase[^1] - start) / (2.0 * Math.PI));
        var resolved = options with { InitialPhase = truePhase[0], MaxDuration = maxDuration, Substeps = m };
        return new SimulatedRun(system.Name, mu, time, recorded, truePhase, turns, reached, resolved);
    }
}

/// <summary>A planar system at fixed μ as the field the integrators step.</summary>
internal readonly struct PlanarSystemField(IPlanarSystem system, double mu) : IPlanarField
{
    /// <inheritdoc/>
    public void Rate(double x0, double x1, out double rate0, out double rate1) => system.Rate(x0, x1, mu, out rate0, out rate1);
}
