using NormalFormFit.Numerics;

namespace NormalFormFit.Simulation;

/// <summary>
/// The Wang–Buzsáki model of a hippocampal interneuron (Wang &amp; Buzsáki 1996, J. Neurosci. 16:6402; parameters as
/// given there, quoted from memory — the onset used in tests is computed from these values and checked against SciPy):
/// C V̇ = I − ḡNa m∞³h(V − E_Na) − ḡK n⁴(V − E_K) − ḡL(V − E_L), ḣ = φ(αh(1 − h) − βh h), ṅ = φ(αn(1 − n) − βn n),
/// m∞ = αm/(αm + βm), αm = −0.1(V + 35)/(e^−0.1(V+35) − 1), βm = 4e^−(V+60)/18, αh = 0.07e^−(V+58)/20,
/// βh = 1/(e^−0.1(V+28) + 1), αn = −0.01(V + 34)/(e^−0.1(V+34) − 1), βn = 0.125e^−(V+44)/80.
/// C = 1 μF/cm², ḡNa = 35, ḡK = 9, ḡL = 0.1 mS/cm², E_Na = 55, E_K = −90, E_L = −65 mV, φ = 5. Class I: firing starts
/// at a saddle-node on the invariant circle, at the knee of the steady-state current I∞(V).
/// </summary>
public sealed record WangBuzsaki
{
    /// <summary>Membrane capacitance (μF/cm²).</summary>
    public double C { get; init; } = 1;

    /// <summary>Maximal sodium conductance (mS/cm²).</summary>
    public double GNa { get; init; } = 35;

    /// <summary>Maximal potassium conductance (mS/cm²).</summary>
    public double GK { get; init; } = 9;

    /// <summary>Leak conductance (mS/cm²).</summary>
    public double GL { get; init; } = 0.1;

    /// <summary>Sodium reversal (mV).</summary>
    public double ENa { get; init; } = 55;

    /// <summary>Potassium reversal (mV).</summary>
    public double EK { get; init; } = -90;

    /// <summary>Leak reversal (mV).</summary>
    public double EL { get; init; } = -65;

    /// <summary>Temperature factor of the h and n kinetics.</summary>
    public double Phi { get; init; } = 5;

    /// <summary>The published set.</summary>
    public static WangBuzsaki Standard { get; } = new();

    private static double AlphaM(double v) => Math.Abs(v + 35) < 1e-9 ? 1 : -0.1 * (v + 35) / (Math.Exp(-0.1 * (v + 35)) - 1);

    private static double BetaM(double v) => 4 * Math.Exp(-(v + 60) / 18);

    private static double AlphaH(double v) => 0.07 * Math.Exp(-(v + 58) / 20);

    private static double BetaH(double v) => 1 / (Math.Exp(-0.1 * (v + 28)) + 1);

    private static double AlphaN(double v) => Math.Abs(v + 34) < 1e-9 ? 0.1 : -0.01 * (v + 34) / (Math.Exp(-0.1 * (v + 34)) - 1);

    private static double BetaN(double v) => 0.125 * Math.Exp(-(v + 44) / 80);

    private static double MInf(double v) => AlphaM(v) / (AlphaM(v) + BetaM(v));

    /// <summary>Steady-state current I∞(V): the current that holds V at rest with every gate at its steady state.</summary>
    public double SteadyStateCurrent(double v)
    {
        var m = MInf(v);
        var h = AlphaH(v) / (AlphaH(v) + BetaH(v));
        var n = AlphaN(v) / (AlphaN(v) + BetaN(v));
        return (GNa * m * m * m * h * (v - ENa)) + (GK * n * n * n * n * (v - EK)) + (GL * (v - EL));
    }

    /// <summary>
    /// The onset: the first local maximum of I∞(V) from −90 mV (the knee, where rest and saddle merge), by a 0.05 mV
    /// scan for the first fall of I∞ and golden-section search on the bracketing 0.1 mV to 10⁻¹⁰ mV.
    /// </summary>
    public (double Current, double Voltage) RestSaddleNode()
    {
        for (var v = -90.0; v < 0; v += 0.05)
        {
            if (SteadyStateCurrent(v + 0.05) < SteadyStateCurrent(v))
            {
                double a = v - 0.05, b = v + 0.05;
                var g = (Math.Sqrt(5) - 1) / 2;
                while (b - a > 1e-10)
                {
                    var c = b - (g * (b - a));
                    var d = a + (g * (b - a));
                    if (SteadyStateCurrent(c) > SteadyStateCurrent(d))
                    {
                        b = d;
                    }
                    else
                    {
                        a = c;
                    }
                }

                var vc = (a + b) / 2;
                return (SteadyStateCurrent(vc), vc);
            }
        }

        throw new InvalidOperationException("I∞(V) has no local maximum: no class-I onset");
    }

    /// <summary>Right-hand side at current <paramref name="current"/>: state (V, h, n) → derivatives.</summary>
    public void Derivatives(double current, ReadOnlySpan<double> s, Span<double> d)
    {
        double v = s[0], h = s[1], n = s[2];
        var m = MInf(v);
        d[0] = (current - (GNa * m * m * m * h * (v - ENa)) - (GK * n * n * n * n * (v - EK)) - (GL * (v - EL))) / C;
        d[1] = Phi * ((AlphaH(v) * (1 - h)) - (BetaH(v) * h));
        d[2] = Phi * ((AlphaN(v) * (1 - n)) - (BetaN(v) * n));
    }

    /// <summary>
    /// A current-clamp sweep from the rest state at zero current (found by integrating 500 ms from V = −65 mV with the
    /// gates at steady state): the current stepped to <paramref name="current"/> at t = 0, classical RK4 with step
    /// <paramref name="step"/> ms, every step recorded; with <paramref name="currentNoise"/> &gt; 0 a white noise current
    /// (μA/cm²·√ms) as an Euler–Maruyama increment (σ/C)·√h·N(0, 1) on V (Kloeden &amp; Platen 1992, §10.2).
    /// </summary>
    public double[] Sweep(double current, double duration, double step = 0.05, double currentNoise = 0, int noiseSeed = 0)
    {
        const double v0 = -65;
        double[] s = [v0, AlphaH(v0) / (AlphaH(v0) + BetaH(v0)), AlphaN(v0) / (AlphaN(v0) + BetaN(v0))];
        for (var k = 0; k < 50000; k++)
        {
            Step(0, 0.01, s);
        }

        var noise = currentNoise > 0 ? GaussianSource.Create(noiseSeed, stream: 1) : null;
        var kick = currentNoise / C * Math.Sqrt(step);
        var n = (int)Math.Round(duration / step) + 1;
        var vs = new double[n];
        for (var k = 0; k < n; k++)
        {
            vs[k] = s[0];
            Step(current, step, s);
            if (noise is not null)
            {
                s[0] += kick * noise.Next();
            }
        }

        return vs;
    }

    private void Step(double current, double h, double[] s) => OdeStepper.RungeKutta4(new AtCurrent(this, current), h, s.AsSpan());

    /// <summary>The model at a fixed injected current, as a field for <see cref="OdeStepper"/>.</summary>
    private readonly record struct AtCurrent(WangBuzsaki Model, double Current) : IVectorField
    {
        public void Rate(ReadOnlySpan<double> x, Span<double> rate) => Model.Derivatives(Current, x, rate);
    }
}
