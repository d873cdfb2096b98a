namespace NormalFormFit.Bottleneck;

/// <summary>
/// The local normal form at the bottleneck, θ̇ ≈ a + b(θ − θ*)², with bootstrap standard errors.
/// </summary>
/// <param name="Phase">θ* in [0, 2π), radians.</param>
/// <param name="A">a: the minimum speed (rad per time unit).</param>
/// <param name="B">b: the curvature (per rad per time unit).</param>
/// <param name="HalfWidth">Half-width of the phase window used, radians.</param>
/// <param name="Samples">Samples inside the window.</param>
/// <param name="ResidualRms">Weighted root-mean-square residual of the fit (rad per time unit).</param>
/// <param name="QuarticBias">
/// Change of a when the window is halved: a check on the quartic bias of a too-wide window (Taylor
/// remainder of the field beyond second order).
/// </param>
public sealed record BottleneckFit(Estimate Phase, Estimate A, Estimate B, double HalfWidth, int Samples, double ResidualRms, double QuarticBias)
{
    /// <summary>Binned residuals of the fit across its window, for judging the fit by eye (empty when not computed).</summary>
    public IReadOnlyList<ResidualBin> Residuals { get; init; } = [];

    /// <summary>Width of the bottleneck, √(a/b) (radians); NaN when a ≤ 0.</summary>
    public double Width => A.Value > 0 && B.Value > 0 ? Math.Sqrt(A.Value / B.Value) : double.NaN;

    /// <summary>
    /// Passage time of θ̇ = a + bx² over the whole line, ∫dx/(a+bx²) = π/√(ab), with its standard error
    /// by the delta method (a and b errors treated as independent).
    /// </summary>
    public Estimate PassageTime
    {
        get
        {
            var a = A.Value;
            var b = B.Value;
            if (!(a > 0 && b > 0))
            {
                return new Estimate(double.NaN, double.NaN);
            }

            var t = Math.PI / Math.Sqrt(a * b);
            var rel = 0.5 * Math.Sqrt(Square(A.StandardError / a) + Square(B.StandardError / b));
            return new Estimate(t, t * rel);
        }
    }

    private static double Square(double x) => x * x;
}
