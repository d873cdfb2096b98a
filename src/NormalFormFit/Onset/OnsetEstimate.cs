namespace NormalFormFit.Onset;

/// <summary>A polynomial trend y(μ) fitted by weighted least squares, with its covariance.</summary>
/// <param name="Coefficients">c₀, c₁[, c₂] of y = Σ cₖ (μ − μ₀)ᵏ.</param>
/// <param name="Covariance">Covariance of the coefficients (already multiplied by <see cref="OnsetCurve.CovarianceScale"/>).</param>
/// <param name="Origin">μ₀, the centre of the parameter values (for conditioning).</param>
/// <param name="ReducedChiSquare">χ²/(n − p) against the per-run standard errors.</param>
/// <param name="DegreesOfFreedom">n − p.</param>
/// <param name="Scaled">True when the covariance was scaled by the reduced χ² (Birge ratio) and Student-t quantiles apply
/// (the bottleneck route's trend: only when that ratio exceeds 1, <see cref="TrendFit.ScalesDown"/>).</param>
public sealed record Trend(double[] Coefficients, double[,] Covariance, double Origin, double ReducedChiSquare, int DegreesOfFreedom, bool Scaled) : OnsetCurve
{
    /// <inheritdoc/>
    public override double ReducedChiSquare { get; init; } = ReducedChiSquare;

    /// <inheritdoc/>
    public override int DegreesOfFreedom { get; init; } = DegreesOfFreedom;

    /// <inheritdoc/>
    public override bool Scaled { get; init; } = Scaled;

    /// <inheritdoc/>
    public override OnsetLaw Law => OnsetLaw.Polynomial;

    /// <inheritdoc/>
    public override string Description => Degree == 1 ? "weighted straight line" : $"weighted polynomial, degree {Degree}";

    /// <inheritdoc/>
    internal override int ParameterCount => Coefficients.Length;

    /// <summary>Polynomial degree.</summary>
    public int Degree => Coefficients.Length - 1;

    /// <summary>y(μ).</summary>
    public override double Evaluate(double mu)
    {
        var x = mu - Origin;
        var y = 0.0;
        for (var k = Coefficients.Length - 1; k >= 0; k--)
        {
            y = (y * x) + Coefficients[k];
        }

        return y;
    }

    /// <summary>dy/dμ.</summary>
    public override double Slope(double mu)
    {
        var x = mu - Origin;
        var y = 0.0;
        for (var k = Coefficients.Length - 1; k >= 1; k--)
        {
            y = (y * x) + (k * Coefficients[k]);
        }

        return y;
    }

    /// <summary>Variance of y(μ) from the coefficient covariance.</summary>
    public override double Variance(double mu)
    {
        var x = mu - Origin;
        var p = Coefficients.Length;
        Span<double> g = stackalloc double[p];
        g[0] = 1;
        for (var k = 1; k < p; k++)
        {
            g[k] = g[k - 1] * x;
        }

        var v = 0.0;
        for (var i = 0; i < p; i++)
        {
            for (var j = 0; j < p; j++)
            {
                v += g[i] * Covariance[i, j] * g[j];
            }
        }

        return Math.Max(v, 0);
    }

    /// <inheritdoc/>
    internal override double[] FitGradient(double mu)
    {
        var g = new double[Coefficients.Length];
        var x = mu - Origin;
        var v = 1.0;
        for (var k = 0; k < g.Length; k++)
        {
            g[k] = v;
            v *= x;
        }

        return g;
    }

    /// <inheritdoc/>
    internal override double FitError(double mu, double routeError) => routeError;

    /// <inheritdoc/>
    internal override double[] RootGradient(double root)
    {
        // Implicit root y(μc; c) = 0: dμc/dc = −(∂y/∂c)/y′(μc) (delta method, as in the onset's standard error).
        var slope = Slope(root);
        return [.. FitGradient(root).Select(g => -g / slope)];
    }
}

/// <summary>An onset estimate μc from one route.</summary>
/// <param name="Route">The bottleneck route (a → 0) or the period route (T⁻² → 0).</param>
/// <param name="Value">μc.</param>
/// <param name="StandardError">Delta-method standard error, sd(y(μc))/|y′(μc)| (for the square-root law: from the
/// Jacobian of all its parameters).</param>
/// <param name="Ci95">95% interval by inverting the test of y(μ) = 0 (Fieller 1954 for a straight line; profile
/// likelihood for the square-root law).</param>
/// <param name="Runs">Runs used.</param>
/// <param name="Curve">The fitted curve: a polynomial <see cref="Onset.Trend"/>, or for the period route possibly the
/// square-root law with an offset (<see cref="SquareRootPeriodLaw"/>).</param>
/// <param name="Diagnostics">What qualifies the estimate.</param>
public sealed record OnsetEstimate(OnsetRoute Route, double Value, double StandardError, Interval Ci95, int Runs, OnsetCurve? Curve, IReadOnlyList<Diagnostic> Diagnostics)
{
    /// <summary>The fitted polynomial trend (null when the route chose another law; see <see cref="Curve"/>).</summary>
    public Trend? Trend => Curve as Trend;

    /// <summary>True when a finite value was obtained.</summary>
    public bool IsAvailable => double.IsFinite(Value);

    /// <summary>Runs below onset (relaxation rates) that entered this route's trend.</summary>
    public int RunsBelowOnset { get; init; }

    /// <summary>An estimate that could not be made, with the reason.</summary>
    public static OnsetEstimate NotAvailable(OnsetRoute route, int runs, Diagnostic why) =>
        new(route, double.NaN, double.NaN, new Interval(double.NaN, double.NaN), runs, null, [why]);
}

/// <summary>The two routes to the onset.</summary>
public enum OnsetRoute
{
    /// <summary>The minimum speed a of the bottleneck normal form, a → 0.</summary>
    Bottleneck,

    /// <summary>The measured period, T⁻² → 0.</summary>
    Period,
}

/// <summary>Whether a route's model applies to the kind of onset found.</summary>
public enum RouteStatus
{
    /// <summary>The kind of onset is a saddle-node on the circle: the route's model holds.</summary>
    Applicable,

    /// <summary>The kind of onset could not be told: the route assumes a saddle-node on the circle.</summary>
    Unconfirmed,

    /// <summary>Homoclinic onset: the trend the route extrapolates is not the one its model predicts.</summary>
    Unreliable,

    /// <summary>Finite-period onset: there is no bottleneck to close.</summary>
    NotApplicable,
}

/// <summary>The routes' names in the sentences of messages.</summary>
internal static class OnsetRouteWords
{
    /// <summary>"bottleneck" or "period", as in "the period route".</summary>
    public static string Noun(this OnsetRoute route) => route == OnsetRoute.Bottleneck ? "bottleneck" : "period";
}

/// <summary>Agreement of two onset estimates: z = (μ₁ − μ₂)/√(σ₁² + σ₂²), consistent when |z| ≤ 2.</summary>
/// <param name="Z">The z statistic (NaN when either estimate is missing).</param>
/// <param name="Consistent">|z| ≤ 2.</param>
/// <param name="Reason">The most likely reason for a disagreement, in plain words; null when consistent.</param>
public sealed record OnsetAgreement(double Z, bool Consistent, string? Reason);
