namespace NormalFormFit.Smoothing;

/// <summary>
/// Forwards to <see cref="Numerics.Brent"/> for callers not yet switched to the numerics layer (Compare); to be removed
/// once they call <see cref="Numerics.Brent"/> directly.
/// </summary>
internal static class Brent
{
    /// <summary>See <see cref="Numerics.Brent.Minimize"/>.</summary>
    public static double Minimize(Func<double, double> f, double a, double b, double x, double fx, double tolerance) =>
        Numerics.Brent.Minimize(f, a, b, x, fx, tolerance);
}
