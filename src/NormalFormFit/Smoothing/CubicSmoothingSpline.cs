using NormalFormFit.Numerics;

namespace NormalFormFit.Smoothing;

/// <summary>
/// Cubic smoothing spline: the f minimising Σ wᵢ(yᵢ − f(tᵢ))² + λ∫f''², a natural cubic spline with knots
/// at the tᵢ (Reinsch 1967; Green &amp; Silverman 1994, ch. 2). λ fixed, or chosen by generalised
/// cross-validation (Craven &amp; Wahba 1979) with tr A from the band of the inverse (Hutchinson &amp;
/// de Hoog 1985).
/// </summary>
/// <remarks>
/// Minimum data: 3 points. Cost: O(n) time and memory per λ; a GCV search takes a few dozen λ.
/// Time is rescaled internally to unit mean spacing (λ scales as time³) and weights to unit mean, so the
/// result does not depend on the caller's units and stays well conditioned for any n.
/// </remarks>
public static class CubicSmoothingSpline
{
    // GCV search over log₁₀ of the rescaled λ (GcvSearch). At unit mean spacing the spline's equivalent kernel has
    // a half-width of about λ^(1/4) samples (Silverman 1984, "Spline smoothing: the equivalent variable
    // kernel method"), so 10⁻⁴ is interpolation and n⁴ a straight line. Scan every ScanStep decades
    // (a factor 3 in kernel width) from 10⁻³ to 100·n⁴; the refinement may go one step below the scan.
    private const double LowestLog10Lambda = -3.0;
    private const double ScanStep = 2.0;

    // tr(M⁻¹R) + λ·tr(M⁻¹QᵀW⁻¹Q) = n − 2 exactly; its rounding error measures how far the band of M⁻¹
    // can be trusted. Past 1e-4·tr A (λ ≳ 10¹³ at unit spacing: kernel half-width ≈ 2000 samples) the
    // scan stops; larger λ would need a regression spline with fewer knots (Eilers & Marx 1996).
    private const double TraceIdentityTolerance = 1e-4;

    /// <summary>Fits the smoothing spline.</summary>
    /// <param name="t">Sample times, strictly increasing, finite; at least 3.</param>
    /// <param name="y">Samples, finite, same length as <paramref name="t"/>.</param>
    /// <param name="options">λ (caller's time units, SciPy's convention) or null for GCV.</param>
    /// <param name="weights">Positive finite weights wᵢ, or empty for all ones.</param>
    /// <exception cref="ArgumentException">The inputs break one of the rules above.</exception>
    public static SmoothingSplineFit Fit(
        ReadOnlySpan<double> t,
        ReadOnlySpan<double> y,
        SmoothingOptions? options = null,
        ReadOnlySpan<double> weights = default)
    {
        Validate(t, y, weights, options);
        var system = new ReinschSystem(t, y, weights);
        int n = t.Length;
        var residuals = new double[n];

        GcvPoint point;
        if (options?.Lambda is double lambda)
        {
            point = system.Evaluate(system.FromCallerLambda(lambda), residuals);
            if (!point.IsPositiveDefinite)
            {
                throw new ArgumentException(
                    $"Lambda = {lambda} is too large for these data in double precision (the system is no longer positive definite).",
                    nameof(options));
            }
        }
        else
        {
            double best = SearchLog10Lambda(system, n);
            point = system.Evaluate(Math.Pow(10.0, best), residuals);
        }

        return Assemble(t, y, system, point, residuals);
    }

    internal static double SearchLog10Lambda(ReinschSystem system, int n)
    {
        var scan = new GcvScan(LowestLog10Lambda, ScanStep, (4.0 * Math.Log10(n)) + 2.0, double.NegativeInfinity);
        var best = GcvSearch.MinimizeLog10Lambda(
            x =>
            {
                var p = system.Evaluate(Math.Pow(10.0, x), default);
                return new GcvTrial(IsReliable(p, n), p.Score, p.TraceA);
            },
            scan);
        return double.IsNaN(best)
            ? throw new InvalidOperationException("No λ gave a usable smoothing system; the data cannot be smoothed.")
            : best;
    }

    private static bool IsReliable(GcvPoint p, int n) =>
        p.IsPositiveDefinite
        && Math.Abs(2.0 + p.TraceRMinv + p.TraceIMinusA - n) <= TraceIdentityTolerance * p.TraceA;

    private static SmoothingSplineFit Assemble(
        ReadOnlySpan<double> t, ReadOnlySpan<double> y, ReinschSystem system, GcvPoint point, double[] residuals)
    {
        int n = t.Length;
        var values = new double[n];
        for (int i = 0; i < n; i++)
        {
            values[i] = y[i] - residuals[i];
        }

        // γ is f'' in rescaled time; f''(t) = f''(s)/h̄².
        double toCaller = 1.0 / (system.TimeScale * system.TimeScale);
        var second = new double[n];
        var gamma = system.Gamma;
        for (int i = 0; i < gamma.Length; i++)
        {
            second[i + 1] = gamma[i] * toCaller;
        }

        var knots = t.ToArray();
        var first = new double[n];
        for (int j = 0; j < n - 1; j++)
        {
            double h = knots[j + 1] - knots[j];
            first[j] = ((values[j + 1] - values[j]) / h) - (h * ((2.0 * second[j]) + second[j + 1]) / 6.0);
        }

        double hl = knots[n - 1] - knots[n - 2];
        first[n - 1] = ((values[n - 1] - values[n - 2]) / hl) + (hl * (second[n - 2] + (2.0 * second[n - 1])) / 6.0);

        double dof = point.ResidualDegrees;
        return new SmoothingSplineFit(
            knots,
            values,
            first,
            second,
            system.ToCallerLambda(point.ScaledLambda),
            point.TraceA,
            dof > 0.0 ? point.WeightedRss * system.WeightScale / dof : double.NaN,
            dof > 0.0 ? point.Score : double.NaN);
    }

    private static void Validate(
        ReadOnlySpan<double> t, ReadOnlySpan<double> y, ReadOnlySpan<double> weights, SmoothingOptions? options)
    {
        if (t.Length != y.Length)
        {
            throw new ArgumentException($"t has {t.Length} values but y has {y.Length}.", nameof(y));
        }

        if (t.Length < 3)
        {
            throw new ArgumentException($"A smoothing spline needs at least 3 points; got {t.Length}.", nameof(t));
        }

        if (!weights.IsEmpty && weights.Length != t.Length)
        {
            throw new ArgumentException($"t has {t.Length} values but weights has {weights.Length}.", nameof(weights));
        }

        for (int i = 0; i < t.Length; i++)
        {
            if (!double.IsFinite(t[i]))
            {
                throw new ArgumentException($"t[{i}] is not finite.", nameof(t));
            }

            if (!double.IsFinite(y[i]))
            {
                throw new ArgumentException($"y[{i}] is not finite.", nameof(y));
            }

            if (i > 0 && !(t[i] > t[i - 1]))
            {
                throw new ArgumentException($"t must be strictly increasing; t[{i}] ≤ t[{i - 1}].", nameof(t));
            }

            if (!weights.IsEmpty && !(weights[i] > 0.0 && double.IsFinite(weights[i])))
            {
                throw new ArgumentException($"weights[{i}] must be positive and finite.", nameof(weights));
            }
        }

        if (options?.Lambda is double lambda && !(lambda >= 0.0 && double.IsFinite(lambda)))
        {
            throw new ArgumentException("Lambda must be finite and non-negative.", nameof(options));
        }
    }
}
