namespace NormalFormFit.Onset;

/// <summary>
/// The curve an onset route fitted, on the route's own scale y (a for the bottleneck route, T⁻² for the period route),
/// whatever law it follows: what the figures, the measurement planner, the resting-run check and the reports need.
/// </summary>
/// <remarks>
/// Two laws: <see cref="Trend"/> (a polynomial in μ fitted to y) and <see cref="SquareRootPeriodLaw"/>
/// (T = α(μ − μc)^−½ + β fitted to the periods, shown as y = T⁻²). The fit itself may live on another scale than y
/// (the square-root law fits T): <see cref="FitGradient"/> and <see cref="FitError"/> are on the fit's own scale.
/// </remarks>
public abstract record OnsetCurve
{
    /// <summary>Which law the curve follows.</summary>
    public abstract OnsetLaw Law { get; }

    /// <summary>The law in plain words, for legends and tables.</summary>
    public abstract string Description { get; }

    /// <summary>χ²/(n − p) against the per-run standard errors.</summary>
    public abstract double ReducedChiSquare { get; init; }

    /// <summary>n − p.</summary>
    public abstract int DegreesOfFreedom { get; init; }

    /// <summary>True when the covariance was scaled by the reduced χ² (Birge ratio) and Student-t quantiles apply.</summary>
    public abstract bool Scaled { get; init; }

    /// <summary>The factor the fit's covariance was multiplied by: the reduced χ² when <see cref="Scaled"/>, else 1.</summary>
    public double CovarianceScale => Scaled ? ReducedChiSquare : 1.0;

    /// <summary>y(μ) on the route's scale; NaN where the law is not defined (the square-root law on the resting side).</summary>
    public abstract double Evaluate(double mu);

    /// <summary>dy/dμ (at and beyond μc the square-root law gives its limit at μc).</summary>
    public abstract double Slope(double mu);

    /// <summary>Variance of y(μ) from the parameter covariance (delta method); NaN where the law is not defined.</summary>
    public abstract double Variance(double mu);

    /// <summary>Number of fitted parameters.</summary>
    internal abstract int ParameterCount { get; }

    /// <summary>Gradient, with respect to the parameters, of the quantity fitted at <paramref name="mu"/> (on the fit's own scale).</summary>
    internal abstract double[] FitGradient(double mu);

    /// <summary>A standard error on the route's scale y at <paramref name="mu"/>, carried to the fit's own scale.</summary>
    internal abstract double FitError(double mu, double routeError);

    /// <summary>Gradient of the onset μc with respect to the parameters.</summary>
    internal abstract double[] RootGradient(double root);
}

/// <summary>The laws an onset route can fit (<see cref="OnsetCurve.Law"/>).</summary>
public enum OnsetLaw
{
    /// <summary>A straight line or a quadratic in μ fitted to a or T⁻².</summary>
    Polynomial,

    /// <summary>T = α(μ − μc)^−½ + β fitted to the periods: the saddle-node passage plus a constant excursion time.</summary>
    SquareRootWithOffset,
}
