namespace NormalFormFit.Numerics;

/// <summary>
/// An autonomous vector field ẋ = F(x) in two variables. A one-variable system uses x₀ and returns F₁ = 0, so that
/// x₁ stays where it starts.
/// </summary>
internal interface IPlanarField
{
    /// <summary>F(x): (<paramref name="rate0"/>, <paramref name="rate1"/>) at state (<paramref name="x0"/>, <paramref name="x1"/>).</summary>
    void Rate(double x0, double x1, out double rate0, out double rate1);
}

/// <summary>An autonomous vector field ẋ = F(x) in any number of variables (a conductance-based neuron at a fixed current).</summary>
internal interface IVectorField
{
    /// <summary>F(<paramref name="x"/>) into <paramref name="rate"/> (the same length).</summary>
    void Rate(ReadOnlySpan<double> x, Span<double> rate);
}

/// <summary>
/// Fixed-step integrators for <see cref="IPlanarField"/> and <see cref="IVectorField"/>: the classical fourth-order Runge–Kutta step (Hairer, Nørsett
/// &amp; Wanner, Solving Ordinary Differential Equations I, 2nd ed., 1993, §II.1) and the Euler–Maruyama step for
/// dx = F(x) dt + dW with additive noise (Kloeden &amp; Platen, Numerical Solution of Stochastic Differential
/// Equations, 1992; strong order 1 for additive noise).
/// </summary>
/// <remarks>
/// Generic over the field so that a struct field (a system bound to its parameter) is called without boxing. RK4: four
/// evaluations of F per step, local error O(h⁵). Euler–Maruyama: one evaluation; the caller draws the increments
/// ΔW, so the random stream stays the caller's. Both update x₀ then x₁ from rates taken before either moves.
/// </remarks>
internal static class OdeStepper
{
    /// <summary>One classical RK4 step of size <paramref name="h"/>: x += h/6·(k₁ + 2k₂ + 2k₃ + k₄).</summary>
    public static void RungeKutta4<TField>(TField f, double h, ref double x0, ref double x1)
        where TField : IPlanarField
    {
        f.Rate(x0, x1, out var k10, out var k11);
        f.Rate(x0 + (0.5 * h * k10), x1 + (0.5 * h * k11), out var k20, out var k21);
        f.Rate(x0 + (0.5 * h * k20), x1 + (0.5 * h * k21), out var k30, out var k31);
        f.Rate(x0 + (h * k30), x1 + (h * k31), out var k40, out var k41);
        x0 += h / 6.0 * (k10 + (2.0 * k20) + (2.0 * k30) + k40);
        x1 += h / 6.0 * (k11 + (2.0 * k21) + (2.0 * k31) + k41);
    }

    /// <summary>One classical RK4 step of size <paramref name="h"/> for a field in up to eight variables, in place.</summary>
    public static void RungeKutta4<TField>(TField f, double h, Span<double> x)
        where TField : IVectorField
    {
        var n = x.Length;
        if (n > 8)
        {
            throw new ArgumentException("at most eight variables", nameof(x));
        }

        Span<double> k1 = stackalloc double[n];
        Span<double> k2 = stackalloc double[n];
        Span<double> k3 = stackalloc double[n];
        Span<double> k4 = stackalloc double[n];
        Span<double> tmp = stackalloc double[n];
        f.Rate(x, k1);
        for (var i = 0; i < n; i++)
        {
            tmp[i] = x[i] + (0.5 * h * k1[i]);
        }

        f.Rate(tmp, k2);
        for (var i = 0; i < n; i++)
        {
            tmp[i] = x[i] + (0.5 * h * k2[i]);
        }

        f.Rate(tmp, k3);
        for (var i = 0; i < n; i++)
        {
            tmp[i] = x[i] + (h * k3[i]);
        }

        f.Rate(tmp, k4);
        for (var i = 0; i < n; i++)
        {
            x[i] += h / 6.0 * (k1[i] + (2.0 * k2[i]) + (2.0 * k3[i]) + k4[i]);
        }
    }

    /// <summary>
    /// One Euler–Maruyama step of size <paramref name="h"/>: x += F(x)h + ΔW, with the noise increments
    /// (<paramref name="dw0"/>, <paramref name="dw1"/>) drawn by the caller (for dx = F dt + √(2D) dW: ΔW = √(2Dh)·Z).
    /// </summary>
    public static void EulerMaruyama<TField>(TField f, double h, double dw0, double dw1, ref double x0, ref double x1)
        where TField : IPlanarField
    {
        f.Rate(x0, x1, out var r0, out var r1);
        x0 += (r0 * h) + dw0;
        x1 += (r1 * h) + dw1;
    }
}
