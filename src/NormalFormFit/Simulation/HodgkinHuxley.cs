using NormalFormFit.Numerics;

namespace NormalFormFit.Simulation;

/// <summary>
/// The Hodgkin–Huxley model of the squid giant axon (Hodgkin &amp; Huxley 1952, J. Physiol. 117:500, the standard
/// parameter set of their Table 3 and eqs. 5–7, 12–13, 20–21), in today's sign convention with the resting potential
/// at −65 mV (V = −V_HH − 65, so their V_Na = −115, V_K = +12, V_L = −10.613 mV become E_Na = 50, E_K = −77,
/// E_L = −54.387 mV; the translation is from memory, the constants are the paper's):
/// C V̇ = I − ḡNa m³h(V − E_Na) − ḡK n⁴(V − E_K) − ḡL(V − E_L), ẋ = αx(V)(1 − x) − βx(V)x for x = m, h, n, with
/// αn = 0.01(V + 55)/(1 − e^−(V+55)/10), βn = 0.125 e^−(V+65)/80, αm = 0.1(V + 40)/(1 − e^−(V+40)/10),
/// βm = 4 e^−(V+65)/18, αh = 0.07 e^−(V+65)/20, βh = 1/(1 + e^−(V+35)/10) (rates in 1/ms at 6.3 °C).
/// Units: mV, ms, μA/cm², μF/cm², mS/cm². Class II: repetitive firing starts at a finite rate (about 50 spikes/s),
/// not through a saddle-node on the circle; used as a model that must NOT be judged a saddle-node.
/// </summary>
public sealed record HodgkinHuxley
{
    /// <summary>Membrane capacitance, 1 μF/cm² (Table 3).</summary>
    public double C { get; init; } = 1;

    /// <summary>Maximal sodium conductance, 120 mS/cm² (Table 3).</summary>
    public double GNa { get; init; } = 120;

    /// <summary>Maximal potassium conductance, 36 mS/cm² (Table 3).</summary>
    public double GK { get; init; } = 36;

    /// <summary>Leak conductance, 0.3 mS/cm² (Table 3).</summary>
    public double GL { get; init; } = 0.3;

    /// <summary>Sodium reversal, 50 mV (their −115 mV from rest).</summary>
    public double ENa { get; init; } = 50;

    /// <summary>Potassium reversal, −77 mV (their +12 mV from rest).</summary>
    public double EK { get; init; } = -77;

    /// <summary>Leak reversal, −54.387 mV (their −10.613 mV from rest).</summary>
    public double EL { get; init; } = -54.387;

    /// <summary>The standard set.</summary>
    public static HodgkinHuxley Standard { get; } = new();

    private static double AlphaN(double v) => Near(v + 55) ? 0.1 : 0.01 * (v + 55) / (1 - Math.Exp(-(v + 55) / 10));

    private static double BetaN(double v) => 0.125 * Math.Exp(-(v + 65) / 80);

    private static double AlphaM(double v) => Near(v + 40) ? 1.0 : 0.1 * (v + 40) / (1 - Math.Exp(-(v + 40) / 10));

    private static double BetaM(double v) => 4 * Math.Exp(-(v + 65) / 18);

    private static double AlphaH(double v) => 0.07 * Math.Exp(-(v + 65) / 20);

    private static double BetaH(double v) => 1 / (1 + Math.Exp(-(v + 35) / 10));

    // The removable singularity of x/(1 − e^−x/10) at x = 0, where it equals 10.
    private static bool Near(double x) => Math.Abs(x) < 1e-7;

    /// <summary>Right-hand side at current <paramref name="current"/>: state (V, m, h, n) → derivatives.</summary>
    public void Derivatives(double current, ReadOnlySpan<double> s, Span<double> d)
    {
        double v = s[0], m = s[1], h = s[2], n = s[3];
        var ionic = (GNa * m * m * m * h * (v - ENa)) + (GK * n * n * n * n * (v - EK)) + (GL * (v - EL));
        d[0] = (current - ionic) / C;
        d[1] = (AlphaM(v) * (1 - m)) - (BetaM(v) * m);
        d[2] = (AlphaH(v) * (1 - h)) - (BetaH(v) * h);
        d[3] = (AlphaN(v) * (1 - n)) - (BetaN(v) * n);
    }

    /// <summary>The resting state at zero current: V = −65 mV with each gate at its steady state α/(α + β), then 200 ms without current so that V settles.</summary>
    public double[] Rest()
    {
        const double v = -65;
        double[] s = [v, AlphaM(v) / (AlphaM(v) + BetaM(v)), AlphaH(v) / (AlphaH(v) + BetaH(v)), AlphaN(v) / (AlphaN(v) + BetaN(v))];
        for (var k = 0; k < 20000; k++)
        {
            Step(0, 0.01, s);
        }

        return s;
    }

    /// <summary>
    /// A current-clamp sweep from rest: the current stepped from 0 to <paramref name="current"/> at t = 0, classical RK4
    /// with step <paramref name="step"/> ms for <paramref name="duration"/> ms, every step recorded; with
    /// <paramref name="currentNoise"/> &gt; 0 a white noise current (μA/cm²·√ms) added as an Euler–Maruyama increment
    /// (σ/C)·√h·N(0, 1) on V (Kloeden &amp; Platen 1992, §10.2). Returns the voltage.
    /// </summary>
    public double[] Sweep(double current, double duration, double step = 0.05, double currentNoise = 0, int noiseSeed = 0)
    {
        var noise = currentNoise > 0 ? GaussianSource.Create(noiseSeed, stream: 1) : null;
        var kick = currentNoise / C * Math.Sqrt(step);
        var s = Rest();
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
    private readonly record struct AtCurrent(HodgkinHuxley Model, double Current) : IVectorField
    {
        public void Rate(ReadOnlySpan<double> x, Span<double> rate) => Model.Derivatives(Current, x, rate);
    }
}
