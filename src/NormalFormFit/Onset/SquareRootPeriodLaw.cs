namespace NormalFormFit.Onset;

/// <summary>
/// The period law of a saddle-node on the circle with a constant excursion time, T = α d^−½ + β [+ γ d^½],
/// d = s(μ − μc) &gt; 0 on the turning side s, fitted to the periods; shown on the period route's scale as y = T⁻².
/// </summary>
/// <param name="Coefficients">α, β[, γ[, δ]]: T = Σₖ cₖ d^((k−1)/2).</param>
/// <param name="Onset">μc.</param>
/// <param name="Side">+1 when the runs turn above μc, −1 below.</param>
/// <param name="Covariance">Covariance of (α, β[, γ], μc), scaled by the reduced χ² when <paramref name="Scaled"/>.</param>
/// <param name="ReducedChiSquare">χ²/(n − p) of the periods against their standard errors.</param>
/// <param name="DegreesOfFreedom">n − p (p counts μc).</param>
/// <param name="Scaled">True when the covariance was scaled by the reduced χ² (Birge ratio).</param>
public sealed record SquareRootPeriodLaw(double[] Coefficients, double Onset, int Side, double[,] Covariance, double ReducedChiSquare, int DegreesOfFreedom, bool Scaled) : OnsetCurve
{
    /// <inheritdoc/>
    public override double ReducedChiSquare { get; init; } = ReducedChiSquare;

    /// <inheritdoc/>
    public override int DegreesOfFreedom { get; init; } = DegreesOfFreedom;

    /// <inheritdoc/>
    public override bool Scaled { get; init; } = Scaled;

    /// <inheritdoc/>
    public override OnsetLaw Law => OnsetLaw.SquareRootWithOffset;

    /// <inheritdoc/>
    public override string Description => Coefficients.Length switch
    {
        2 => "T = α(μ−μc)^−½ + β",
        3 => "T = α(μ−μc)^−½ + β + γ(μ−μc)^½",
        _ => "T = α(μ−μc)^−½ + β + γ(μ−μc)^½ + δ(μ−μc)",
    };

    /// <inheritdoc/>
    internal override int ParameterCount => Coefficients.Length + 1;

    /// <summary>The fitted period at <paramref name="mu"/> (NaN at or beyond μc).</summary>
    public double PeriodAt(double mu)
    {
        var d = Side * (mu - Onset);
        return d > 0 ? G(d) / Math.Sqrt(d) : double.NaN;
    }

    /// <summary>y = T⁻² = d/g², g = Σ cₖ d^(k/2) = T√d (finite as d → 0).</summary>
    public override double Evaluate(double mu)
    {
        var d = Side * (mu - Onset);
        if (d < 0)
        {
            return double.NaN;
        }

        var g = G(d);
        return g > 0 ? d / (g * g) : double.NaN;
    }

    /// <summary>dy/dμ = s·Σ cₖ(1 − k)d^(k/2)/g³; at and beyond μc its limit s/α².</summary>
    public override double Slope(double mu) => Side * DyDd(Math.Max(Side * (mu - Onset), 0));

    /// <inheritdoc/>
    public override double Variance(double mu)
    {
        var d = Side * (mu - Onset);
        if (d < 0)
        {
            return double.NaN;
        }

        var g = G(d);
        var m = Coefficients.Length;
        var grad = new double[m + 1];
        for (var k = 0; k < m; k++)
        {
            grad[k] = -2 * d / (g * g * g) * Math.Pow(d, 0.5 * k);
        }

        grad[m] = -Side * DyDd(d);
        return Math.Max(Quadratic(grad), 0);
    }

    /// <summary>Gradient of T(μ) with respect to (α, β[, γ], μc).</summary>
    internal override double[] FitGradient(double mu) => Gradient(Coefficients, Onset, Side, mu);

    /// <summary>Gradient of T(μ) with respect to (α, β[, γ], μc) for the given parameters.</summary>
    internal static double[] Gradient(double[] coefficients, double onset, int side, double mu)
    {
        var d = side * (mu - onset);
        var m = coefficients.Length;
        var grad = new double[m + 1];
        var dTdd = 0.0;
        for (var k = 0; k < m; k++)
        {
            grad[k] = Math.Pow(d, 0.5 * (k - 1));
            dTdd += coefficients[k] * 0.5 * (k - 1) * Math.Pow(d, 0.5 * (k - 3));
        }

        grad[m] = -side * dTdd;
        return grad;
    }

    /// <summary>σ_T = σ_y·T³/2 (y = T⁻², delta method), with T from the law.</summary>
    internal override double FitError(double mu, double routeError)
    {
        var t = PeriodAt(mu);
        return routeError * t * t * t / 2;
    }

    /// <inheritdoc/>
    internal override double[] RootGradient(double root)
    {
        var h = new double[ParameterCount];
        h[^1] = 1;
        return h;
    }

    private double G(double d)
    {
        var g = 0.0;
        for (var k = 0; k < Coefficients.Length; k++)
        {
            g += Coefficients[k] * Math.Pow(d, 0.5 * k);
        }

        return g;
    }

    private double DyDd(double d)
    {
        var g = G(d);
        var num = 0.0;
        for (var k = 0; k < Coefficients.Length; k++)
        {
            num += Coefficients[k] * (1 - k) * Math.Pow(d, 0.5 * k);
        }

        return num / (g * g * g);
    }

    private double Quadratic(double[] grad)
    {
        var v = 0.0;
        for (var i = 0; i < grad.Length; i++)
        {
            for (var j = 0; j < grad.Length; j++)
            {
                v += grad[i] * Covariance[i, j] * grad[j];
            }
        }

        return v;
    }
}
