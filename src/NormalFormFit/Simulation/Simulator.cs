using System.Globalization;
using NormalFormFit.Numerics;

namespace NormalFormFit.Simulation;

/// <summary>Synthetic phase recordings from a phase model, with optional dynamic and measurement noise.</summary>
public static class Simulator
{
    private const double Rk4MaxStep = 0.02;   // h·max(|f|, |∂f/∂θ|) without dynamic noise (RK4, fourth order)
    private const double EulerMaxStep = 0.01; // the same with dynamic noise (Euler–Maruyama, first order in the drift)
    private const double MaxNoiseKick = 0.1;  // rad, SD of one Euler–Maruyama kick √(2Dh)
    private const int MinSubsteps = 2;
    private const int SpeedGridPoints = 1024;

    /// <summary>Simulates one run of <paramref name="model"/> at <c>options.Mu</c>.</summary>
    /// <remarks>
    /// Without dynamic noise: classical fourth-order Runge–Kutta (RK4) with a fixed step.
    /// With D &gt; 0: Euler–Maruyama for dθ = f dt + √(2D) dW (Kloeden &amp; Platen 1992), additive noise, so strong
    /// order 1. The step is SamplingInterval / Substeps (see <see cref="SimulationOptions.Substeps"/>).
    /// The run stops at the first sample where the phase has moved <see cref="SimulationOptions.Revolutions"/> whole
    /// turns from its start, or at MaxDuration (below onset it settles and has zero revolutions).
    /// Random draws come from two seeded <see cref="Random"/> streams derived from <see cref="SimulationOptions.Seed"/>
    /// (one for the initial phase and dynamic noise, one for measurement noise), with Gaussians by Box–Muller, so
    /// switching measurement noise on leaves <see cref="SimulatedRun.TruePhase"/> unchanged. Single-threaded and
    /// deterministic: the same options give the same bits on the same .NET runtime and platform math library (seeded
    /// <see cref="Random"/> has kept its algorithm for compatibility, and Math.Sin/Log come from the platform).
    /// Cost O(samples × substeps); about 0.3 s per 10⁶ samples on one core.
    /// </remarks>
    /// <param name="model">The phase model.</param>
    /// <param name="options">Run settings; validated first.</param>
    /// <returns>The run.</returns>
    /// <exception cref="ArgumentException">The options are invalid (the message lists every problem).</exception>
    public static SimulatedRun Run(IPhaseModel model, SimulationOptions options)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(options);
        options.ThrowIfInvalid();

        var mu = options.Mu;
        var dt = options.SamplingInterval;
        var dynamics = GaussianSource.Create(options.Seed, stream: 0);

        // Drawn even when the initial phase is given, so that the resolved options reproduce the noise as well.
        var drawnPhase = Math.PI - (2.0 * Math.PI * dynamics.Uniform.NextDouble());
        var theta0 = options.InitialPhase ?? drawnPhase;
        var maxDuration = options.MaxDuration ?? DefaultMaxDuration(model, options);
        var lastIndex = (long)Math.Floor((maxDuration / dt) + 1e-9);
        if (lastIndex + 1 > SimulationOptions.MaxSamples)
        {
            throw new ArgumentException(
                string.Create(
                    CultureInfo.InvariantCulture,
                    $"The run could need {lastIndex + 1} samples, more than {SimulationOptions.MaxSamples}; set MaxDuration or a larger SamplingInterval."),
                nameof(options));
        }

        var substeps = options.Substeps ?? DefaultSubsteps(model, options);
        var resolved = options with { InitialPhase = theta0, MaxDuration = maxDuration, Substeps = substeps };

        var truePhase = Integrate(model, resolved, theta0, lastIndex, dynamics, out var reached);
        var n = truePhase.Length;
        var time = SampleTimes(dt, n);
        var phase = Record(truePhase, options.MeasurementNoise, options.WrapPhase, options.Seed);
        var turns = (int)Math.Floor(Math.Abs(truePhase[n - 1] - theta0) / (2.0 * Math.PI));
        return new SimulatedRun(model.Name, mu, time, phase, truePhase, turns, reached, resolved);
    }

    /// <summary>
    /// The duration guard used when <see cref="SimulationOptions.MaxDuration"/> is null: three times
    /// Revolutions × period when <see cref="IPhaseModel.ExactPeriod"/> knows the period at μ, but at least
    /// <see cref="SimulationOptions.FallbackMaxDuration"/>; otherwise that fallback.
    /// </summary>
    /// <param name="model">The model.</param>
    /// <param name="options">The options (μ, revolutions).</param>
    /// <returns>The duration in time units.</returns>
    public static double DefaultMaxDuration(IPhaseModel model, SimulationOptions options)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(options);
        var period = model.ExactPeriod(options.Mu);
        return period is { } p && double.IsFinite(p) && p > 0.0
            ? Math.Max(SimulationOptions.FallbackMaxDuration, 3.0 * options.Revolutions * p)
            : SimulationOptions.FallbackMaxDuration;
    }

    /// <summary>
    /// The substep count used when <see cref="SimulationOptions.Substeps"/> is null: the smallest count, at least 2,
    /// with h·max(|f|, |∂f/∂θ|) ≤ 0.02 for RK4 (D = 0); with D &gt; 0, h·max(|f|, |∂f/∂θ|) ≤ 0.01 and √(2Dh) ≤ 0.1 for
    /// Euler–Maruyama. h = SamplingInterval / substeps; the maxima are taken over a grid of 1024 phases.
    /// </summary>
    /// <param name="model">The model.</param>
    /// <param name="options">The options (μ, sampling interval, dynamic noise).</param>
    /// <returns>The number of integration steps per sample.</returns>
    public static int DefaultSubsteps(IPhaseModel model, SimulationOptions options)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(options);
        var (maxSpeed, maxSlope) = SpeedBounds(model, options.Mu);
        var dt = options.SamplingInterval;
        var stochastic = options.DynamicNoise > 0.0;
        var needed = dt * Math.Max(maxSpeed, maxSlope) / (stochastic ? EulerMaxStep : Rk4MaxStep);
        if (stochastic)
        {
            needed = Math.Max(needed, 2.0 * options.DynamicNoise * dt / (MaxNoiseKick * MaxNoiseKick));
        }

        if (!double.IsFinite(needed) || needed > int.MaxValue)
        {
            throw new ArgumentException(
                string.Create(
                    CultureInfo.InvariantCulture,
                    $"Model '{model.Name}' at μ = {options.Mu} needs {needed:G3} steps per sample; set Substeps or a smaller SamplingInterval."),
                nameof(options));
        }

        return Math.Max(MinSubsteps, (int)Math.Ceiling(needed));
    }

    private static (double MaxSpeed, double MaxSlope) SpeedBounds(IPhaseModel model, double mu)
    {
        const double eps = 1e-6;
        double maxSpeed = 0.0, maxSlope = 0.0;
        for (var k = 0; k < SpeedGridPoints; k++)
        {
            var theta = (2.0 * Math.PI * k / SpeedGridPoints) - Math.PI;
            maxSpeed = Math.Max(maxSpeed, Math.Abs(model.Velocity(theta, mu)));
            var slope = (model.Velocity(theta + eps, mu) - model.Velocity(theta - eps, mu)) / (2.0 * eps);
            maxSlope = Math.Max(maxSlope, Math.Abs(slope));
        }

        return (maxSpeed, maxSlope);
    }

    private static double[] Integrate(
        IPhaseModel model,
        SimulationOptions o,
        double theta0,
        long lastIndex,
        GaussianSource noise,
        out bool reached)
    {
        var mu = o.Mu;
        var m = o.Substeps!.Value;
        var h = o.SamplingInterval / m;
        var target = 2.0 * Math.PI * o.Revolutions;
        var kick = Math.Sqrt(2.0 * o.DynamicNoise * h);
        var stochastic = o.DynamicNoise > 0.0;

        var field = new PhaseModelField(model, mu);
        var buffer = new double[InitialCapacity(model, o, lastIndex)];
        buffer[0] = theta0;
        var theta = theta0;
        var rest = 0.0; // the field's second variable, unused by a phase model
        var n = 1;
        reached = false;
        for (long i = 1; i <= lastIndex; i++)
        {
            if (stochastic)
            {
                for (var s = 0; s < m; s++)
                {
                    // Euler–Maruyama: θ += f(θ)h + √(2Dh)·Z.
                    OdeStepper.EulerMaruyama(field, h, kick * noise.Next(), 0.0, ref theta, ref rest);
                }
            }
            else
            {
                for (var s = 0; s < m; s++)
                {
                    OdeStepper.RungeKutta4(field, h, ref theta, ref rest);
                }
            }

            if (n == buffer.Length)
            {
                Array.Resize(ref buffer, (int)Math.Min(2L * buffer.Length, lastIndex + 1));
            }

            buffer[n++] = theta;
            if (Math.Abs(theta - theta0) >= target)
            {
                reached = true;
                break;
            }
        }

        if (n != buffer.Length)
        {
            Array.Resize(ref buffer, n);
        }

        return buffer;
    }

    private static int InitialCapacity(IPhaseModel model, SimulationOptions o, long lastIndex)
    {
        var expected = model.ExactPeriod(o.Mu) is { } p && double.IsFinite(p)
            ? (1.05 * o.Revolutions * p / o.SamplingInterval) + 64.0
            : 65_536.0;
        return (int)Math.Min(lastIndex + 1, Math.Max(2.0, expected));
    }

    /// <summary>
    /// Time[i] = i × dt computed in decimal when dt converts to decimal exactly, so that files show 0.03 rather than
    /// 0.030000000000000002; otherwise in double.
    /// </summary>
    private static double[] SampleTimes(double dt, int n)
    {
        var time = new double[n];
        var exact = false;
        var step = 0m;
        try
        {
            step = (decimal)dt;
            exact = (double)step == dt;
        }
        catch (OverflowException)
        {
            exact = false;
        }

        for (var i = 0; i < n; i++)
        {
            time[i] = exact ? (double)(step * i) : i * dt;
        }

        return time;
    }

    private static double[] Record(double[] truePhase, double sigma, bool wrap, int seed)
    {
        var phase = new double[truePhase.Length];
        var noise = sigma > 0.0 ? GaussianSource.Create(seed, stream: 1) : null;
        for (var i = 0; i < phase.Length; i++)
        {
            var value = truePhase[i];
            if (noise is not null)
            {
                value += sigma * noise.Next();
            }

            phase[i] = wrap ? Wrap(value) : value;
        }

        return phase;
    }

    /// <summary>θ wrapped to (−π, π].</summary>
    internal static double Wrap(double theta)
    {
        var w = theta - (2.0 * Math.PI * Math.Ceiling((theta - Math.PI) / (2.0 * Math.PI)));
        if (w <= -Math.PI)
        {
            w += 2.0 * Math.PI;
        }
        else if (w > Math.PI)
        {
            w -= 2.0 * Math.PI;
        }

        return w;
    }
}

/// <summary>A phase model at fixed μ as a planar field: θ̇ = f(θ, μ) in the first variable, the second at rest.</summary>
internal readonly struct PhaseModelField(IPhaseModel model, double mu) : IPlanarField
{
    /// <inheritdoc/>
    public void Rate(double x0, double x1, out double rate0, out double rate1)
    {
        rate0 = model.Velocity(x0, mu);
        rate1 = 0.0;
    }
}
