using NormalFormFit.Numerics;

namespace NormalFormFit.Smoothing;

/// <summary>
/// A fitted penalised regression spline (P-spline) evaluated at its samples; the fitted values and f' were
/// written into the caller's buffers.
/// </summary>
/// <param name="Lambda">
/// λ of the equivalent Σ(yᵢ − f(tᵢ))² + λ∫f''², in the caller's time units: the difference penalty
/// λ_P·|D₂c|² approximates λ∫f''² with λ = λ_P·Δ³ for knot spacing Δ (Eilers &amp; Marx 1996, §4).
/// </param>
/// <param name="EffectiveDegreesOfFreedom">tr of the influence matrix, between 2 and the number of coefficients.</param>
/// <param name="ResidualVariance">Σrᵢ²/(n − tr).</param>
/// <param name="GcvScore">(Σrᵢ²/n)/(1 − tr/n)².</param>
/// <param name="Coefficients">Number of B-spline coefficients used (knot intervals + 3).</param>
public sealed record PenalizedSplineFit(double Lambda, double EffectiveDegreesOfFreedom, double ResidualVariance, double GcvScore, int Coefficients);

/// <summary>
/// Penalised regression spline for long, densely sampled records: cubic B-splines on equally spaced knots
/// (de Boor 1978) with a second-order difference penalty on the coefficients (Eilers &amp; Marx 1996,
/// "Flexible smoothing with B-splines and penalties", Statist. Sci. 11, 89–121); λ by generalised
/// cross-validation (Craven &amp; Wahba 1979) with the trace from the band of (BᵀB + λDᵀD)⁻¹ (Hutchinson &amp;
/// de Hoog 1985).
/// </summary>
/// <remarks>
/// Cost: one O(n) pass forms BᵀB (half-bandwidth 3) and Bᵀy; each λ then costs O(m) for m ≪ n coefficients;
/// one more O(n) pass evaluates f and f'. Memory O(m) beyond the caller's buffers. Minimum data: 8 points.
/// The basis is chosen with <see cref="SmoothingOptions.SamplesPerKnot"/> samples per knot interval and refined
/// while GCV asks for more than a quarter of the coefficients' freedom (the basis would then limit the fit;
/// Ruppert 2002 found results insensitive to the knot count once it is large enough). A straight line is fitted
/// exactly by the basis and unpenalised, so the fit is equivariant under adding a line; the line through the
/// end points is removed first so that the normal equations hold small numbers.
/// </remarks>
public static class PenalizedSpline
{
    private const int Band = 3;

    // GCV search over log₁₀ of the rescaled λ_P (GcvSearch): every decade from 10⁻⁴; the refinement stays within
    // the scanned range.
    private const double LowestLog10Lambda = -4.0;
    private const double ScanStep = 1.0;

    // Past λ_P ≈ 10¹² (penalty rescaled to O(1) per knot) the condition number of BᵀB + λDᵀD exceeds about
    // 10¹³ and the solution loses more than three digits: the scan stops there (kernel ≈ 10³ knot intervals).
    private const double HighestLog10Lambda = 12.0;

    // The basis limits the fit when GCV spends more than this share of the coefficients (common practice, no source).
    private const double MaxEdfShare = 0.25;

    /// <summary>Fits by GCV (or the fixed λ of <paramref name="options"/>) and writes f(tᵢ) and f'(tᵢ).</summary>
    /// <param name="t">Sample times, strictly increasing and finite; at least 8.</param>
    /// <param name="y">Samples, finite.</param>
    /// <param name="options">Options; <see cref="SmoothingOptions.Lambda"/> fixes λ in the caller's units.</param>
    /// <param name="values">Receives f(tᵢ); same length as <paramref name="t"/>.</param>
    /// <param name="derivatives">Receives f'(tᵢ); same length as <paramref name="t"/>.</param>
    /// <exception cref="ArgumentException">The inputs break one of the rules above.</exception>
    public static PenalizedSplineFit Fit(ReadOnlySpan<double> t, ReadOnlySpan<double> y, SmoothingOptions? options, Span<double> values, Span<double> derivatives)
    {
        options ??= SmoothingOptions.Default;
        var n = t.Length;
        if (y.Length != n || values.Length != n || derivatives.Length != n)
        {
            throw new ArgumentException("t, y, values and derivatives must have the same length.", nameof(y));
        }

        if (n < 8)
        {
            throw new ArgumentException($"A penalised spline needs at least 8 points; got {n}.", nameof(t));
        }

        for (var i = 0; i < n; i++)
        {
            if (!double.IsFinite(t[i]) || !double.IsFinite(y[i]))
            {
                throw new ArgumentException($"t[{i}] or y[{i}] is not finite.", nameof(t));
            }

            if (i > 0 && !(t[i] > t[i - 1]))
            {
                throw new ArgumentException($"t must be strictly increasing; t[{i}] ≤ t[{i - 1}].", nameof(t));
            }
        }

        if (options.Lambda is double given && !(given >= 0.0 && double.IsFinite(given)))
        {
            throw new ArgumentException("Lambda must be finite and non-negative.", nameof(options));
        }

        var perKnot = Math.Max(options.SamplesPerKnot, 1.0);
        while (true)
        {
            var intervals = (int)Math.Clamp(Math.Ceiling(n / perKnot), 4, Math.Max(4, n - 4));
            var system = new PenalizedSplineSystem(t, y, intervals);
            double log10;
            if (options.Lambda is double lambda)
            {
                log10 = Math.Log10(Math.Max(system.FromCallerLambda(lambda), 1e-300));
            }
            else
            {
                log10 = Search(system);
            }

            var point = system.Evaluate(Math.Pow(10.0, log10), keepCoefficients: true);
            if (!point.Valid)
            {
                throw new ArgumentException("λ is too large for these data in double precision.", nameof(options));
            }

            var refine = options.Lambda is null && point.Trace > MaxEdfShare * system.Coefficients && perKnot > 2.0 && intervals < n - 4;
            if (refine)
            {
                perKnot = Math.Max(perKnot / 4.0, 2.0);
                continue;
            }

            var rss = system.EvaluateAtSamples(t, y, values, derivatives);
            var dof = n - point.Trace;
            return new PenalizedSplineFit(
                system.ToCallerLambda(Math.Pow(10.0, log10)),
                point.Trace,
                dof > 0 ? rss / dof : double.NaN,
                dof > 0 ? rss / n / Sq(dof / n) : double.NaN,
                system.Coefficients);
        }
    }

    private static double Search(PenalizedSplineSystem system)
    {
        var scan = new GcvScan(LowestLog10Lambda, ScanStep, HighestLog10Lambda, LowestLog10Lambda);
        var best = GcvSearch.MinimizeLog10Lambda(
            x =>
            {
                var p = system.Evaluate(Math.Pow(10.0, x), keepCoefficients: false);
                return new GcvTrial(p.Valid, p.Score, p.Trace);
            },
            scan);
        return double.IsNaN(best)
            ? throw new InvalidOperationException("No λ gave a usable penalised spline; the data cannot be smoothed.")
            : best;
    }

    private static double Sq(double x) => x * x;

    private readonly record struct Point(bool Valid, double Score, double Trace);

    /// <summary>BᵀB and Bᵀy of one basis, and the per-λ solve.</summary>
    private sealed class PenalizedSplineSystem
    {
        private readonly int n;
        private readonly double t0;
        private readonly double delta;
        private readonly int intervals;
        private readonly double slope;
        private readonly double intercept;
        private readonly double[] gram; // BᵀB, lower band: (i, i − k) at i·4 + k
        private readonly double[] bty;
        private readonly double yty;
        private readonly double penaltyScale; // mean samples per knot interval: puts λ on the scale of BᵀB
        private readonly double[] coefficients;

        // Per-λ work space, allocated once: the matrix, its factors, the band of its inverse.
        private readonly SymmetricBandedMatrix matrix;
        private readonly SymmetricBandedMatrix inverseBand;
        private readonly double[] factorLower;
        private readonly double[] factorDiagonal;
        private readonly double[] trial;

        public PenalizedSplineSystem(ReadOnlySpan<double> t, ReadOnlySpan<double> y, int intervals)
        {
            n = t.Length;
            this.intervals = intervals;
            t0 = t[0];
            delta = (t[n - 1] - t0) / intervals;
            intercept = y[0];
            slope = (y[n - 1] - y[0]) / (t[n - 1] - t0);
            Coefficients = intervals + 3;
            gram = new double[Coefficients * (Band + 1)];
            bty = new double[Coefficients];
            coefficients = new double[Coefficients];
            matrix = new SymmetricBandedMatrix(Coefficients, Band);
            inverseBand = new SymmetricBandedMatrix(Coefficients, Band);
            factorLower = new double[Coefficients * Band];
            factorDiagonal = new double[Coefficients];
            trial = new double[Coefficients];
            penaltyScale = (double)n / intervals;
            Span<double> b = stackalloc double[4];
            var sum = 0.0;
            for (var i = 0; i < n; i++)
            {
                var j = Locate(t[i], out var u);
                Basis(u, b);
                var r = y[i] - intercept - (slope * (t[i] - t0));
                sum += r * r;
                for (var a = 0; a < 4; a++)
                {
                    var row = (j + a) * (Band + 1);
                    bty[j + a] += b[a] * r;
                    for (var c = 0; c <= a; c++)
                    {
                        gram[row + a - c] += b[a] * b[c];
                    }
                }
            }

            yty = sum;
        }

        public int Coefficients { get; }

        public double FromCallerLambda(double lambda) => lambda / (penaltyScale * delta * delta * delta);

        public double ToCallerLambda(double scaled) => scaled * penaltyScale * delta * delta * delta;

        public Point Evaluate(double scaledLambda, bool keepCoefficients)
        {
            var m = Coefficients;
            var a = matrix.LowerBandForWriting;
            gram.CopyTo(a);
            var w = scaledLambda * penaltyScale;
            for (var r = 0; r + 2 < m; r++)
            {
                // Row r of D₂ is (1, −2, 1) on columns r, r + 1, r + 2: add w·dᵀd.
                a[(r * (Band + 1)) + 0] += w;
                a[((r + 1) * (Band + 1)) + 0] += 4 * w;
                a[((r + 2) * (Band + 1)) + 0] += w;
                a[((r + 1) * (Band + 1)) + 1] -= 2 * w;
                a[((r + 2) * (Band + 1)) + 1] -= 2 * w;
                a[((r + 2) * (Band + 1)) + 2] += w;
            }

            BandedLdlt factor;
            try
            {
                factor = BandedLdlt.FactorizeInto(matrix, factorLower, factorDiagonal);
            }
            catch (ArgumentException)
            {
                return new Point(false, double.NaN, double.NaN);
            }

            var c = keepCoefficients ? coefficients : trial;
            factor.Solve(bty, c);
            factor.InverseBandInto(inverseBand);
            var inverse = inverseBand.LowerBand;

            // tr((BᵀB + λDᵀD)⁻¹BᵀB) needs only the band of the inverse; r = y − Bc has
            // rᵀr = yᵀy − 2cᵀBᵀy + cᵀBᵀBc.
            double trace = 0, cty = 0, cgc = 0;
            for (var i = 0; i < m; i++)
            {
                var row = i * (Band + 1);
                trace += inverse[row] * gram[row];
                cty += c[i] * bty[i];
                var gc = gram[row] * c[i];
                for (var k = 1; k <= Band && k <= i; k++)
                {
                    trace += 2 * inverse[row + k] * gram[row + k];
                    gc += 2 * gram[row + k] * c[i - k];
                }

                cgc += c[i] * gc;
            }

            var rss = Math.Max(yty - (2 * cty) + cgc, 0.0);
            var dof = 1.0 - (trace / n);
            var valid = double.IsFinite(trace) && trace > 0 && dof > 0;
            return new Point(valid, valid ? rss / n / (dof * dof) : double.NaN, trace);
        }

        /// <summary>Writes f and f' at the samples from the last kept coefficients; returns Σ(yᵢ − f(tᵢ))².</summary>
        public double EvaluateAtSamples(ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> values, Span<double> derivatives)
        {
            Span<double> b = stackalloc double[4];
            Span<double> d = stackalloc double[4];
            var c = coefficients;
            var rss = 0.0;
            for (var i = 0; i < n; i++)
            {
                var j = Locate(t[i], out var u);
                Basis(u, b);
                BasisDerivative(u, d);
                var f = (b[0] * c[j]) + (b[1] * c[j + 1]) + (b[2] * c[j + 2]) + (b[3] * c[j + 3]);
                var g = (d[0] * c[j]) + (d[1] * c[j + 1]) + (d[2] * c[j + 2]) + (d[3] * c[j + 3]);
                values[i] = f + intercept + (slope * (t[i] - t0));
                derivatives[i] = (g / delta) + slope;
                var r = y[i] - values[i];
                rss += r * r;
            }

            return rss;
        }

        private int Locate(double x, out double u)
        {
            var s = (x - t0) / delta;
            var j = Math.Clamp((int)s, 0, intervals - 1);
            u = s - j;
            return j;
        }

        // Uniform cubic B-splines on [j, j + 1] in the local variable u (de Boor 1978, ch. IX).
        private static void Basis(double u, Span<double> b)
        {
            var v = 1 - u;
            var u2 = u * u;
            var u3 = u2 * u;
            b[0] = v * v * v / 6;
            b[1] = ((3 * u3) - (6 * u2) + 4) / 6;
            b[2] = ((-3 * u3) + (3 * u2) + (3 * u) + 1) / 6;
            b[3] = u3 / 6;
        }

        private static void BasisDerivative(double u, Span<double> d)
        {
            var v = 1 - u;
            d[0] = -v * v / 2;
            d[1] = (1.5 * u * u) - (2 * u);
            d[2] = (-1.5 * u * u) + u + 0.5;
            d[3] = u * u / 2;
        }
    }
}
