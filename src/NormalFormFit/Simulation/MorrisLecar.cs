using NormalFormFit.Numerics;

namespace NormalFormFit.Simulation;

/// <summary>
/// Morris–Lecar model (Morris &amp; Lecar 1981) with the class-I parameter set of Rinzel &amp; Ermentrout (1989,
/// "Analysis of neural excitability and oscillations", in Koch &amp; Segev, Methods in Neuronal Modeling; values
/// quoted from memory — the onset used in tests is computed from these values, so the tests do not rely on them):
/// C V̇ = I − gL(V − VL) − gCa m∞(V)(V − VCa) − gK w(V − VK),  ẇ = φ (w∞(V) − w)/τw(V),
/// m∞ = ½(1 + tanh((V − V1)/V2)), w∞ = ½(1 + tanh((V − V3)/V4)), τw = 1/cosh((V − V3)/(2V4)).
/// Units: mV, ms, μA/cm², μF/cm², mS/cm². Class I: oscillations start at a saddle-node on the invariant circle.
/// As a planar system: state (V, w), μ = I.
/// </summary>
public sealed record MorrisLecar : IPlanarSystem
{
    /// <summary>Membrane capacitance.</summary>
    public double C { get; init; } = 20;

    /// <summary>Leak conductance.</summary>
    public double GL { get; init; } = 2;

    /// <summary>Calcium conductance.</summary>
    public double GCa { get; init; } = 4;

    /// <summary>Potassium conductance.</summary>
    public double GK { get; init; } = 8;

    /// <summary>Leak reversal.</summary>
    public double VL { get; init; } = -60;

    /// <summary>Calcium reversal.</summary>
    public double VCa { get; init; } = 120;

    /// <summary>Potassium reversal.</summary>
    public double VK { get; init; } = -84;

    /// <summary>m∞ midpoint.</summary>
    public double V1 { get; init; } = -1.2;

    /// <summary>m∞ slope.</summary>
    public double V2 { get; init; } = 18;

    /// <summary>w∞ midpoint.</summary>
    public double V3 { get; init; } = 12;

    /// <summary>w∞ slope.</summary>
    public double V4 { get; init; } = 17.4;

    /// <summary>Rate factor φ.</summary>
    public double Phi { get; init; } = 1.0 / 15;

    /// <summary>The class-I set.</summary>
    public static MorrisLecar ClassOne { get; } = new();

    /// <inheritdoc/>
    public string Name => "morris-lecar";

    /// <inheritdoc/>
    public string Formula => "C dV/dt = I − gL(V − VL) − gCa m∞(V)(V − VCa) − gK w(V − VK), dw/dt = φ(w∞(V) − w)/τw(V)";

    private double MInf(double v) => 0.5 * (1 + Math.Tanh((v - V1) / V2));

    private double WInf(double v) => 0.5 * (1 + Math.Tanh((v - V3) / V4));

    /// <summary>Right-hand side (V̇, ẇ) at current I.</summary>
    public (double DV, double DW) Derivatives(double v, double w, double current)
    {
        var dv = (current - (GL * (v - VL)) - (GCa * MInf(v) * (v - VCa)) - (GK * w * (v - VK))) / C;
        var dw = Phi * (WInf(v) - w) * Math.Cosh((v - V3) / (2 * V4));
        return (dv, dw);
    }

    /// <inheritdoc/>
    public void Rate(double x0, double x1, double mu, out double rate0, out double rate1) => (rate0, rate1) = Derivatives(x0, x1, mu);

    /// <summary>
    /// The angle of (V, w) about (−10 mV, 0.2) with V in units of 40 mV and w in units of 0.2: the class-I spiking
    /// cycle (V from about −47 to +31 mV, w from 0 to 0.42) goes round that point once per spike, counterclockwise.
    /// </summary>
    public double Phase(double x0, double x1) => Math.Atan2((x1 - 0.2) / 0.2, (x0 + 10) / 40);

    /// <summary>V = −40 mV with w at its steady state, the start of <see cref="Simulate"/>.</summary>
    public (double X0, double X1) Start(double mu) => (-40, WInf(-40));

    /// <summary>Steady-state current I∞(V) = gL(V−VL) + gCa m∞(V)(V−VCa) + gK w∞(V)(V−VK): the current that holds V at rest.</summary>
    public double SteadyStateCurrent(double v) =>
        (GL * (v - VL)) + (GCa * MInf(v) * (v - VCa)) + (GK * WInf(v) * (v - VK));

    /// <summary>dI∞/dV, analytic.</summary>
    public double SteadyStateSlope(double v)
    {
        var m = MInf(v);
        var w = WInf(v);
        var dm = 0.5 / V2 / Sq(Math.Cosh((v - V1) / V2));
        var dw = 0.5 / V4 / Sq(Math.Cosh((v - V3) / V4));
        return GL + (GCa * ((dm * (v - VCa)) + m)) + (GK * ((dw * (v - VK)) + w));
    }

    /// <summary>
    /// The current of the saddle-node of rest states: the first local maximum of I∞(V) (the knee of the steady-state
    /// I–V curve, where dI∞/dV = 0 and rest and saddle merge). Found by scanning V from −90 mV in 0.1 mV steps for the
    /// first sign change of dI∞/dV from + to −, then bisection to 10⁻¹³ mV. Cost ~10³ evaluations.
    /// </summary>
    public (double Current, double Voltage) RestSaddleNode()
    {
        for (var v = -90.0; v < 60; v += 0.1)
        {
            if (SteadyStateSlope(v) > 0 && SteadyStateSlope(v + 0.1) <= 0)
            {
                var vc = RootFinding.Bisect(SteadyStateSlope, v + 0.1, v, new BisectionStop(1e-13, 0.0, 200));
                return (SteadyStateCurrent(vc), vc);
            }
        }

        throw new InvalidOperationException("I∞(V) has no local maximum: the parameters do not give a class-I (saddle-node) onset");
    }

    /// <summary>
    /// The rest state at current <paramref name="current"/> below the knee of I∞(V): V on the lower branch where
    /// I∞(V) = I (bisection between −120 mV and the knee, to 10⁻¹⁰ mV), w = w∞(V).
    /// </summary>
    public (double V, double W) RestState(double current)
    {
        var (knee, vKnee) = RestSaddleNode();
        if (!(current < knee))
        {
            throw new ArgumentOutOfRangeException(nameof(current), current, "there is no rest state above the knee of I∞(V)");
        }

        var v = RootFinding.Bisect(x => SteadyStateCurrent(x) - current, -120, vKnee, new BisectionStop(1e-10, 0.0, 200));
        return (v, WInf(v));
    }

    /// <summary>
    /// A current-clamp sweep: the cell at rest under <paramref name="restCurrent"/>, the current stepped to
    /// <paramref name="current"/> at t = 0, then classical RK4 with step <paramref name="step"/> (ms) for
    /// <paramref name="duration"/> ms, every step recorded (so the sampling rate is 1/step). With
    /// <paramref name="currentNoise"/> &gt; 0, a white noise current of that intensity (μA/cm²·√ms, seeded by
    /// <paramref name="noiseSeed"/>) is added to each step as an Euler–Maruyama increment on V, (σ/C)·√h·N(0, 1) (Kloeden &amp; Platen 1992, §10.2;
    /// the drift keeps its RK4 step).
    /// </summary>
    public StateTrack Sweep(double current, double duration, double step = 0.05, double restCurrent = 0, double currentNoise = 0, int noiseSeed = 0)
    {
        var noise = currentNoise > 0 ? GaussianSource.Create(noiseSeed, stream: 1) : null;
        var kick = currentNoise / C * Math.Sqrt(step);
        var (v, w) = RestState(restCurrent);
        var field = new PlanarSystemField(this, current);
        var n = (int)Math.Round(duration / step) + 1;
        var times = new double[n];
        var vs = new double[n];
        var ws = new double[n];
        for (var k = 0; k < n; k++)
        {
            times[k] = k * step;
            vs[k] = v;
            ws[k] = w;
            OdeStepper.RungeKutta4(field, step, ref v, ref w);
            if (noise is not null)
            {
                v += kick * noise.Next();
            }
        }

        return new StateTrack(times, vs, ws);
    }

    /// <summary>
    /// Integrates at current <paramref name="current"/> by classical RK4 with step <paramref name="step"/> (ms), records
    /// every <paramref name="every"/>-th step, from the first upward crossing of V = 0 mV (so the transient is dropped)
    /// until <paramref name="spikes"/> further spikes, or <paramref name="maxTime"/> ms.
    /// </summary>
    public StateTrack Simulate(double current, int spikes, double step = 0.05, int every = 4, double maxTime = 2e5)
    {
        var (v, w) = Start(current);
        var field = new PlanarSystemField(this, current);
        var t = 0.0;
        var times = new List<double>();
        var vs = new List<double>();
        var ws = new List<double>();
        var recording = false;
        var count = 0;
        var k = 0;
        while (t < maxTime)
        {
            var before = v;
            OdeStepper.RungeKutta4(field, step, ref v, ref w);
            t += step;
            if (before < 0 && v >= 0)
            {
                if (recording)
                {
                    count++;
                }

                recording = true;
            }

            if (recording && k++ % every == 0)
            {
                times.Add(t);
                vs.Add(v);
                ws.Add(w);
            }

            if (count > spikes)
            {
                break;
            }
        }

        return new StateTrack([.. times], [.. vs], [.. ws]);
    }

    private static double Sq(double x) => x * x;
}

/// <summary>A 2-D state trajectory: time, voltage, recovery variable.</summary>
/// <param name="Time">Times (ms).</param>
/// <param name="V">Membrane voltage (mV).</param>
/// <param name="W">Recovery variable (dimensionless).</param>
public sealed record StateTrack(double[] Time, double[] V, double[] W);
