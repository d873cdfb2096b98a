using NormalFormFit.Numerics;

namespace NormalFormFit.Simulation;

/// <summary>
/// Adaptive explicit Runge–Kutta 5(4) of Dormand &amp; Prince (1980) for a planar field, with the standard error control
/// of Hairer, Nørsett &amp; Wanner (Solving Ordinary Differential Equations I, 2nd ed., 1993, §II.4–II.5): error
/// estimate from the embedded fourth-order solution, scaled by atol + rtol·max(|x|, |x_new|) per component, RMS norm,
/// step factor 0.9·err^(−1/5) clamped to [0.2, 5]; the fifth-order solution is kept (local extrapolation) and the last
/// stage is reused as the next first stage (FSAL). Seven stages, six evaluations per accepted step.
/// </summary>
internal sealed class DormandPrince<TField>(TField field, double relativeTolerance, double absoluteTolerance, double maxStep)
    where TField : IPlanarField
{
    private const double A21 = 1.0 / 5;
    private const double A31 = 3.0 / 40, A32 = 9.0 / 40;
    private const double A41 = 44.0 / 45, A42 = -56.0 / 15, A43 = 32.0 / 9;
    private const double A51 = 19372.0 / 6561, A52 = -25360.0 / 2187, A53 = 64448.0 / 6561, A54 = -212.0 / 729;
    private const double A61 = 9017.0 / 3168, A62 = -355.0 / 33, A63 = 46732.0 / 5247, A64 = 49.0 / 176, A65 = -5103.0 / 18656;
    private const double A71 = 35.0 / 384, A73 = 500.0 / 1113, A74 = 125.0 / 192, A75 = -2187.0 / 6784, A76 = 11.0 / 84;
    private const double E1 = 71.0 / 57600, E3 = -71.0 / 16695, E4 = 71.0 / 1920, E5 = -17253.0 / 339200, E6 = 22.0 / 525, E7 = -1.0 / 40;

    // The field is autonomous, so the stage times (0, 1/5, 3/10, 4/5, 8/9, 1, 1) do not enter.
    private double k10, k11;
    private bool started;

    /// <summary>Time reached.</summary>
    public double Time { get; private set; }

    /// <summary>State.</summary>
    public double X0 { get; private set; }

    /// <summary>State.</summary>
    public double X1 { get; private set; }

    /// <summary>The field at the current state (the FSAL stage).</summary>
    public (double D0, double D1) Rate => (k10, k11);

    /// <summary>Step size proposed for the next step.</summary>
    public double Step { get; private set; }

    /// <summary>Sets the state and time (the step size is kept when already chosen).</summary>
    public void Reset(double x0, double x1, double time, double firstStep)
    {
        X0 = x0;
        X1 = x1;
        Time = time;
        Step = Math.Min(firstStep, maxStep);
        field.Rate(x0, x1, out k10, out k11);
        started = true;
    }

    /// <summary>
    /// One accepted step (rejected trials repeated with a smaller step); false when the state or the step stops being
    /// finite or the step falls below 10⁻¹⁴ of the time scale.
    /// </summary>
    public bool Advance()
    {
        if (!started)
        {
            throw new InvalidOperationException("Reset first.");
        }

        for (var trial = 0; trial < 60; trial++)
        {
            var h = Step;
            var y0 = X0;
            var y1 = X1;
            field.Rate(y0 + (h * A21 * k10), y1 + (h * A21 * k11), out var k20, out var k21);
            field.Rate(y0 + (h * ((A31 * k10) + (A32 * k20))), y1 + (h * ((A31 * k11) + (A32 * k21))), out var k30, out var k31);
            field.Rate(y0 + (h * ((A41 * k10) + (A42 * k20) + (A43 * k30))), y1 + (h * ((A41 * k11) + (A42 * k21) + (A43 * k31))), out var k40, out var k41);
            field.Rate(y0 + (h * ((A51 * k10) + (A52 * k20) + (A53 * k30) + (A54 * k40))), y1 + (h * ((A51 * k11) + (A52 * k21) + (A53 * k31) + (A54 * k41))), out var k50, out var k51);
            field.Rate(y0 + (h * ((A61 * k10) + (A62 * k20) + (A63 * k30) + (A64 * k40) + (A65 * k50))), y1 + (h * ((A61 * k11) + (A62 * k21) + (A63 * k31) + (A64 * k41) + (A65 * k51))), out var k60, out var k61);
            var n0 = y0 + (h * ((A71 * k10) + (A73 * k30) + (A74 * k40) + (A75 * k50) + (A76 * k60)));
            var n1 = y1 + (h * ((A71 * k11) + (A73 * k31) + (A74 * k41) + (A75 * k51) + (A76 * k61)));
            field.Rate(n0, n1, out var k70, out var k71);
            var e0 = h * ((E1 * k10) + (E3 * k30) + (E4 * k40) + (E5 * k50) + (E6 * k60) + (E7 * k70));
            var e1 = h * ((E1 * k11) + (E3 * k31) + (E4 * k41) + (E5 * k51) + (E6 * k61) + (E7 * k71));
            var s0 = absoluteTolerance + (relativeTolerance * Math.Max(Math.Abs(y0), Math.Abs(n0)));
            var s1 = absoluteTolerance + (relativeTolerance * Math.Max(Math.Abs(y1), Math.Abs(n1)));
            var err = Math.Sqrt(0.5 * (((e0 / s0) * (e0 / s0)) + ((e1 / s1) * (e1 / s1))));
            if (!double.IsFinite(err))
            {
                Step = h * 0.2;
                if (!(Step > 1e-14 * maxStep))
                {
                    return false;
                }

                continue;
            }

            var factor = err == 0 ? 5.0 : Math.Clamp(0.9 * Math.Pow(err, -0.2), 0.2, 5.0);
            if (err <= 1.0)
            {
                X0 = n0;
                X1 = n1;
                Time += h;
                k10 = k70;
                k11 = k71;
                Step = Math.Min(h * factor, maxStep);
                return double.IsFinite(n0) && double.IsFinite(n1);
            }

            Step = h * Math.Min(factor, 1.0);
            if (!(Step > 1e-14 * maxStep))
            {
                return false;
            }
        }

        return false;
    }
}
