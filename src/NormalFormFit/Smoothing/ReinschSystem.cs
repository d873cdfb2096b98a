using System.Runtime.CompilerServices;

namespace NormalFormFit.Smoothing;

/// <summary>
/// The pentadiagonal system of the cubic smoothing spline in the Reinsch form, on rescaled data:
/// (R + λQᵀW⁻¹Q)γ = Qᵀy, residual y − f = λW⁻¹Qγ (Reinsch 1967; Green &amp; Silverman 1994, ch. 2).
/// Time is rescaled to unit mean spacing and weights to unit mean, so that R and QᵀW⁻¹Q are O(1)
/// whatever the caller's units. All buffers are allocated once; each λ costs O(n) and allocates nothing.
/// </summary>
/// <remarks>
/// Cost per λ: one forward sweep (assemble M, factor LDLᵀ, forward substitution) and one backward sweep
/// (back substitution, band of M⁻¹ by Hutchinson &amp; de Hoog 1985 kept in a sliding window, traces and
/// residuals). The factorisation is the p = 2 case of <see cref="BandedLdlt"/>, written out because this
/// is the hot path of the GCV search; tests check one against the other.
/// </remarks>
internal sealed class ReinschSystem
{
    private readonly int n;
    private readonly int m; // n − 2 interior unknowns
    private readonly double[]? inverseWeights; // W⁻¹ (unit mean weights); null: all ones

    // R (tridiagonal) and T = QᵀW⁻¹Q (pentadiagonal), diagonals by row of the upper triangle.
    private readonly double[] r0, r1, t0, t1, t2;
    private readonly double[] qty; // Qᵀy
    private readonly double[] inverseSpacing; // 1/hⱼ, rescaled

    // Factor and solution buffers, reused for every λ.
    private readonly double[] l1, l2, inverseD, gamma;

    public ReinschSystem(ReadOnlySpan<double> t, ReadOnlySpan<double> y, ReadOnlySpan<double> weights)
    {
        n = t.Length;
        m = n - 2;
        TimeScale = (t[n - 1] - t[0]) / (n - 1);

        var h = new double[n - 1];
        inverseSpacing = new double[n - 1];
        for (int j = 0; j < n - 1; j++)
        {
            h[j] = (t[j + 1] - t[j]) / TimeScale;
            inverseSpacing[j] = 1.0 / h[j];
        }

        WeightScale = 1.0;
        if (!weights.IsEmpty)
        {
            double sum = 0.0;
            foreach (var w in weights)
            {
                sum += w;
            }

            WeightScale = sum / n;
            inverseWeights = new double[n];
            for (int i = 0; i < n; i++)
            {
                inverseWeights[i] = WeightScale / weights[i];
            }
        }

        r0 = new double[m];
        r1 = new double[m];
        t0 = new double[m];
        t1 = new double[m];
        t2 = new double[m];
        qty = new double[m];
        var ih = inverseSpacing;
        for (int i = 0; i < m; i++)
        {
            // Column i of Q (interior knot i + 1): rows i, i + 1, i + 2.
            double qa = ih[i], qb = -ih[i] - ih[i + 1], qc = ih[i + 1];
            double wa = Wi(i), wb = Wi(i + 1), wc = Wi(i + 2);
            r0[i] = (h[i] + h[i + 1]) / 3.0;
            r1[i] = i + 1 < m ? h[i + 1] / 6.0 : 0.0;
            t0[i] = (qa * qa * wa) + (qb * qb * wb) + (qc * qc * wc);
            if (i + 1 < m)
            {
                // Column i + 1 has rows i + 1, i + 2, i + 3 with entries ih[i+1], −ih[i+1] − ih[i+2], ih[i+2].
                t1[i] = (qb * ih[i + 1] * wb) + (qc * (-ih[i + 1] - ih[i + 2]) * wc);
            }

            if (i + 2 < m)
            {
                t2[i] = qc * ih[i + 2] * wc;
            }

            qty[i] = ((y[i + 2] - y[i + 1]) * ih[i + 1]) - ((y[i + 1] - y[i]) * ih[i]);
        }

        l1 = new double[m];
        l2 = new double[m];
        inverseD = new double[m];
        gamma = new double[m];
    }

    /// <summary>Mean spacing of the caller's times: s = (t − t₀)/TimeScale.</summary>
    public double TimeScale { get; }

    /// <summary>Mean of the caller's weights (1 without weights).</summary>
    public double WeightScale { get; }

    public int Count => n;

    /// <summary>How many λ have been evaluated (the cost of a search).</summary>
    public int Evaluations { get; private set; }

    /// <summary>γ (second derivatives at interior knots, rescaled time) of the last <see cref="Evaluate"/>.</summary>
    public ReadOnlySpan<double> Gamma => gamma;

    /// <summary>λ in the caller's units from the internal λ: λ = λₛ·w̄·h̄³ (the penalty scales as time⁻³).</summary>
    public double ToCallerLambda(double scaledLambda) => scaledLambda * WeightScale * TimeScale * TimeScale * TimeScale;

    /// <summary>Internal λ from the caller's λ.</summary>
    public double FromCallerLambda(double lambda) => lambda / (WeightScale * TimeScale * TimeScale * TimeScale);

    /// <summary>
    /// Solves at internal λ ≥ 0 and returns the criterion's ingredients. If <paramref name="residuals"/>
    /// is not empty it receives y − f (length n).
    /// </summary>
    public GcvPoint Evaluate(double lambda, Span<double> residuals)
    {
        Evaluations++;
        return ForwardSweep(lambda)
            ? BackwardSweep(lambda, residuals)
            : new GcvPoint(lambda, n, double.NaN, double.NaN, double.NaN, double.NaN) { IsPositiveDefinite = false };
    }

    private double Wi(int k) => inverseWeights is null ? 1.0 : inverseWeights[k];

    // M = R + λT assembled on the fly, M = L·D·Lᵀ, forward substitution L·z = Qᵀy with z stored in gamma.
    // False when a pivot is not positive: rounding has destroyed positive definiteness (λ far too large).
    [MethodImpl(MethodImplOptions.AggressiveOptimization)] // hot loop: skip the unoptimised first tier
    private bool ForwardSweep(double lambda)
    {
        double l1Prev = 0.0; // L(i − 1, i − 2)
        double zPrev2 = 0.0, zPrev1 = 0.0;
        for (int i = 0; i < m; i++)
        {
            double a22 = i >= 2 ? lambda * t2[i - 2] : 0.0; // M(i, i − 2)
            double a21 = i >= 1 ? r1[i - 1] + (lambda * t1[i - 1]) : 0.0; // M(i, i − 1)
            double u2 = a22; // L(i, i − 2)·D(i − 2)
            double li2 = i >= 2 ? u2 * inverseD[i - 2] : 0.0;
            double u1 = a21 - (u2 * l1Prev); // L(i, i − 1)·D(i − 1)
            double li1 = i >= 1 ? u1 * inverseD[i - 1] : 0.0;
            double di = r0[i] + (lambda * t0[i]) - (u1 * li1) - (u2 * li2);
            if (!(di > 0.0))
            {
                return false;
            }

            double z = qty[i] - (li1 * zPrev1) - (li2 * zPrev2);
            l1[i] = li1;
            l2[i] = li2;
            inverseD[i] = 1.0 / di;
            gamma[i] = z;
            zPrev2 = zPrev1;
            zPrev1 = z;
            l1Prev = li1;
        }

        return true;
    }

    // Back substitution, band of M⁻¹ in a sliding window, tr(M⁻¹R), tr(M⁻¹T), residuals.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private GcvPoint BackwardSweep(double lambda, Span<double> residuals)
    {
        var ih = inverseSpacing;
        bool keep = !residuals.IsEmpty;
        double g1 = 0.0, g2 = 0.0; // γ(i + 1), γ(i + 2)
        double b11 = 0.0, b12 = 0.0, b22 = 0.0; // B(i+1,i+1), B(i+1,i+2), B(i+2,i+2)
        double traceR = 0.0, traceT = 0.0;
        double rss = 0.0, weightedRss = 0.0;
        for (int i = m - 1; i >= 0; i--)
        {
            double la = i + 1 < m ? l1[i + 1] : 0.0; // L(i + 1, i)
            double lb = i + 2 < m ? l2[i + 2] : 0.0; // L(i + 2, i)
            double g0 = (gamma[i] * inverseD[i]) - (la * g1) - (lb * g2);
            gamma[i] = g0;

            double b02 = -(la * b12) - (lb * b22);
            double b01 = -(la * b11) - (lb * b12);
            double b00 = inverseD[i] - (la * b01) - (lb * b02);
            traceR += (b00 * r0[i]) + (2.0 * b01 * r1[i]);
            traceT += (b00 * t0[i]) + (2.0 * ((b01 * t1[i]) + (b02 * t2[i])));
            b22 = b11;
            b12 = b01;
            b11 = b00;

            // Knot k = i + 2 has Q entries from columns i (ih[i+1]), i + 1 (−ih[i+1] − ih[i+2]), i + 2 (ih[i+2]).
            int k = i + 2;
            double qg = (g0 * ih[k - 1]) - (g1 * (ih[k - 1] + (k < n - 1 ? ih[k] : 0.0))) + (k < n - 1 ? g2 * ih[k] : 0.0);
            AddResidual(k, lambda * Wi(k) * qg, residuals, keep, ref rss, ref weightedRss);
            g2 = g1;
            g1 = g0;
        }

        // Knots 1 and 0: column 0 has rows 0, 1, 2; column 1 has rows 1, 2, 3.
        double q1 = (-(ih[0] + ih[1]) * g1) + (m > 1 ? ih[1] * g2 : 0.0);
        AddResidual(1, lambda * Wi(1) * q1, residuals, keep, ref rss, ref weightedRss);
        AddResidual(0, lambda * Wi(0) * ih[0] * g1, residuals, keep, ref rss, ref weightedRss);

        return new GcvPoint(lambda, n, rss, weightedRss, traceR, lambda * traceT);
    }

    private void AddResidual(int k, double r, Span<double> residuals, bool keep, ref double rss, ref double weightedRss)
    {
        if (keep)
        {
            residuals[k] = r;
        }

        rss += r * r;
        weightedRss += r * r / Wi(k);
    }
}

/// <summary>
/// What one λ gives: residual sums of squares and the two complementary traces
/// tr A − 2 = tr(M⁻¹R) and tr(I − A) = λ·tr(M⁻¹QᵀW⁻¹Q) (Hutchinson &amp; de Hoog 1985).
/// </summary>
internal readonly record struct GcvPoint(
    double ScaledLambda, int Count, double Rss, double WeightedRss, double TraceRMinv, double TraceIMinusA)
{
    /// <summary>False when the factorisation broke down; the other members are then NaN.</summary>
    public bool IsPositiveDefinite { get; init; } = true;

    /// <summary>
    /// tr A. Both traces are sums of the same band; each is accurate when it is small, so the smaller one
    /// is used and the other follows from tr A + tr(I − A) = n, avoiding cancellation at either end.
    /// </summary>
    public double TraceA => TraceRMinv <= TraceIMinusA ? 2.0 + TraceRMinv : Count - TraceIMinusA;

    /// <summary>n − tr A, by the same choice.</summary>
    public double ResidualDegrees => TraceRMinv <= TraceIMinusA ? Count - 2.0 - TraceRMinv : TraceIMinusA;

    /// <summary>
    /// GCV as SciPy 1.10 <c>make_smoothing_spline</c> defines it: (Σ rᵢ²/n)/(1 − tr A/n)², with unweighted
    /// residuals in the numerator even when weights are given (Craven &amp; Wahba 1979).
    /// </summary>
    public double Score
    {
        get
        {
            double ratio = ResidualDegrees / Count;
            return Rss / Count / (ratio * ratio);
        }
    }
}
