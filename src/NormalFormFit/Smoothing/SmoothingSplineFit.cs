namespace NormalFormFit.Smoothing;

/// <summary>
/// A fitted cubic smoothing spline: a natural cubic spline with knots at the sample times, its λ and
/// the statistics of the fit. Immutable.
/// </summary>
public sealed class SmoothingSplineFit
{
    private readonly double[] knots;
    private readonly double[] values;
    private readonly double[] first;
    private readonly double[] second;

    internal SmoothingSplineFit(
        double[] knots,
        double[] values,
        double[] firstDerivatives,
        double[] secondDerivatives,
        double lambda,
        double effectiveDegreesOfFreedom,
        double residualVariance,
        double gcvScore)
    {
        this.knots = knots;
        this.values = values;
        first = firstDerivatives;
        second = secondDerivatives;
        Lambda = lambda;
        EffectiveDegreesOfFreedom = effectiveDegreesOfFreedom;
        ResidualVariance = residualVariance;
        GcvScore = gcvScore;
    }

    /// <summary>Number of samples n.</summary>
    public int Count => knots.Length;

    /// <summary>λ of Σ wᵢ(yᵢ − f(tᵢ))² + λ∫f''², in the caller's time units (SciPy's convention).</summary>
    public double Lambda { get; }

    /// <summary>tr A, A the influence (hat) matrix: between 2 (straight line) and n (interpolation).</summary>
    public double EffectiveDegreesOfFreedom { get; }

    /// <summary>Σ wᵢ rᵢ² / (n − tr A); NaN when tr A = n (λ = 0).</summary>
    public double ResidualVariance { get; }

    /// <summary>
    /// (Σ rᵢ²/n)/(1 − tr A/n)², as SciPy 1.10 <c>make_smoothing_spline</c> defines it (residuals unweighted);
    /// NaN when tr A = n.
    /// </summary>
    public double GcvScore { get; }

    /// <summary>The knots: the sample times t.</summary>
    public ReadOnlySpan<double> Knots => knots;

    /// <summary>Fitted values f(tᵢ).</summary>
    public ReadOnlySpan<double> Values => values;

    /// <summary>f'(tᵢ).</summary>
    public ReadOnlySpan<double> FirstDerivatives => first;

    /// <summary>f''(tᵢ); zero at both ends (natural spline).</summary>
    public ReadOnlySpan<double> SecondDerivatives => second;

    /// <summary>f(x); outside [t₀, tₙ₋₁] the spline continues as a straight line.</summary>
    public double Evaluate(double x)
    {
        int n = knots.Length;
        if (x <= knots[0])
        {
            return values[0] + (first[0] * (x - knots[0]));
        }

        if (x >= knots[n - 1])
        {
            return values[n - 1] + (first[n - 1] * (x - knots[n - 1]));
        }

        int j = Interval(x);
        double h = knots[j + 1] - knots[j];
        double a = (knots[j + 1] - x) / h, b = (x - knots[j]) / h;
        return (a * values[j]) + (b * values[j + 1])
            + ((((a * a * a) - a) * second[j]) + (((b * b * b) - b) * second[j + 1])) * h * h / 6.0;
    }

    /// <summary>f'(x); constant outside [t₀, tₙ₋₁].</summary>
    public double Derivative(double x)
    {
        int n = knots.Length;
        if (x <= knots[0])
        {
            return first[0];
        }

        if (x >= knots[n - 1])
        {
            return first[n - 1];
        }

        int j = Interval(x);
        double h = knots[j + 1] - knots[j];
        double a = (knots[j + 1] - x) / h, b = (x - knots[j]) / h;
        return ((values[j + 1] - values[j]) / h)
            + ((((3.0 * b * b) - 1.0) * second[j + 1]) - (((3.0 * a * a) - 1.0) * second[j])) * h / 6.0;
    }

    // j with knots[j] ≤ x < knots[j + 1], for x strictly inside.
    private int Interval(double x)
    {
        int i = Array.BinarySearch(knots, x);
        int j = i >= 0 ? i : ~i - 1;
        return Math.Min(j, knots.Length - 2);
    }
}
