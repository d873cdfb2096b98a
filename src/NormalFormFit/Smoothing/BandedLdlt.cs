namespace NormalFormFit.Smoothing;

/// <summary>
/// LDLᵀ factorisation of a symmetric positive-definite band matrix: A = L·D·Lᵀ with L unit lower
/// triangular of half-bandwidth p and D diagonal. Factorising costs O(n p²), a solve O(n p), and the
/// band of A⁻¹ O(n p²).
/// </summary>
/// <remarks>
/// The band of the inverse uses the recursion of Hutchinson &amp; de Hoog (1985), "Smoothing noisy data
/// with spline functions", Numer. Math. 47, 99–106: from Lᵀ·A⁻¹ = D⁻¹·L⁻¹,
/// Bᵢⱼ = δᵢⱼ/Dᵢ − Σₖ₌₁..ₚ L₍ᵢ₊ₖ,ᵢ₎ B₍ᵢ₊ₖ,ⱼ₎ for j ≥ i, run from the last row up; it needs only
/// entries already inside the band.
/// </remarks>
public sealed class BandedLdlt
{
    // Row-major: L(i, i − k) at lower[i·p + k − 1], k = 1..p; D(i) at diagonal[i].
    private readonly double[] lower;
    private readonly double[] diagonal;

    private BandedLdlt(int order, int halfBandwidth, double[] lower, double[] diagonal)
    {
        Order = order;
        HalfBandwidth = halfBandwidth;
        this.lower = lower;
        this.diagonal = diagonal;
    }

    /// <summary>Number of rows (and columns).</summary>
    public int Order { get; }

    /// <summary>p, the half-bandwidth of L.</summary>
    public int HalfBandwidth { get; }

    /// <summary>The diagonal D (all positive).</summary>
    public ReadOnlySpan<double> D => diagonal;

    /// <summary>Factorises <paramref name="matrix"/>; it is not modified.</summary>
    /// <exception cref="ArgumentException">A pivot is not positive: the matrix is not positive definite.</exception>
    public static BandedLdlt Factorize(SymmetricBandedMatrix matrix)
    {
        ArgumentNullException.ThrowIfNull(matrix);
        return FactorizeInto(matrix, new double[matrix.Order * matrix.HalfBandwidth], new double[matrix.Order]);
    }

    /// <summary>
    /// As <see cref="Factorize(SymmetricBandedMatrix)"/>, into caller-owned storage of n·p and n numbers, so that a
    /// search over many matrices of one shape allocates nothing per matrix.
    /// </summary>
    internal static BandedLdlt FactorizeInto(SymmetricBandedMatrix matrix, double[] l, double[] d)
    {
        int n = matrix.Order, p = matrix.HalfBandwidth;
        var a = matrix.LowerBand;
        Span<double> u = p <= 64 ? stackalloc double[p] : new double[p]; // u[k] = L(i, i − k)·D(i − k)
        for (int i = 0; i < n; i++)
        {
            int kmax = Math.Min(p, i);
            // Column j = i − k, from the leftmost: L(i,j) = (A(i,j) − Σ_{c<j} L(i,c) D(c) L(j,c)) / D(j).
            for (int k = kmax; k >= 1; k--)
            {
                int j = i - k;
                double s = a[(i * (p + 1)) + k];
                for (int c = k + 1; c <= kmax; c++)
                {
                    // column i − c is left of j: L(j, i − c) = L(j, j − (c − k)).
                    s -= u[c - 1] * l[(j * p) + (c - k) - 1];
                }

                u[k - 1] = s;
                l[(i * p) + k - 1] = s / d[j];
            }

            double di = a[i * (p + 1)];
            for (int k = 1; k <= kmax; k++)
            {
                di -= u[k - 1] * l[(i * p) + k - 1];
            }

            if (!(di > 0.0))
            {
                throw new ArgumentException(
                    $"Matrix is not positive definite (pivot {i} is {di}).", nameof(matrix));
            }

            d[i] = di;
        }

        return new BandedLdlt(n, p, l, d);
    }

    /// <summary>Solves A·x = b. <paramref name="x"/> may be the same memory as <paramref name="b"/>.</summary>
    public void Solve(ReadOnlySpan<double> b, Span<double> x)
    {
        int n = Order, p = HalfBandwidth;
        if (b.Length != n || x.Length != n)
        {
            throw new ArgumentException($"Both vectors must have length {n}.", nameof(b));
        }

        b.CopyTo(x);
        for (int i = 0; i < n; i++)
        {
            double s = x[i];
            int kmax = Math.Min(p, i);
            for (int k = 1; k <= kmax; k++)
            {
                s -= lower[(i * p) + k - 1] * x[i - k];
            }

            x[i] = s;
        }

        for (int i = n - 1; i >= 0; i--)
        {
            double s = x[i] / diagonal[i];
            int kmax = Math.Min(p, n - 1 - i);
            for (int k = 1; k <= kmax; k++)
            {
                s -= lower[((i + k) * p) + k - 1] * x[i + k];
            }

            x[i] = s;
        }
    }

    /// <summary>Solves A·x = b into a new array.</summary>
    public double[] Solve(ReadOnlySpan<double> b)
    {
        var x = new double[Order];
        Solve(b, x);
        return x;
    }

    /// <summary>
    /// The entries of A⁻¹ within the band (|i − j| ≤ p), by the Hutchinson–de Hoog (1985) recursion;
    /// O(n p²). Entries of A⁻¹ outside the band are in general not zero and are not computed.
    /// </summary>
    public SymmetricBandedMatrix InverseBand()
    {
        var inverse = new SymmetricBandedMatrix(Order, HalfBandwidth);
        InverseBandInto(inverse);
        return inverse;
    }

    /// <summary>As <see cref="InverseBand"/>, into a caller-owned matrix of the same order and half-bandwidth.</summary>
    internal void InverseBandInto(SymmetricBandedMatrix inverse)
    {
        int n = Order, p = HalfBandwidth;
        var b = inverse.LowerBandForWriting; // B(i, i − k) at b[i·(p + 1) + k]
        for (int i = n - 1; i >= 0; i--)
        {
            int kmax = Math.Min(p, n - 1 - i);
            // Off-diagonal B(i, i + e), e = kmax..1: −Σ_k L(i + k, i)·B(i + k, i + e).
            for (int e = kmax; e >= 1; e--)
            {
                double s = 0.0;
                for (int k = 1; k <= kmax; k++)
                {
                    s -= lower[((i + k) * p) + k - 1] * Band(b, p, i + k, i + e);
                }

                b[((i + e) * (p + 1)) + e] = s;
            }

            double diag = 1.0 / diagonal[i];
            for (int k = 1; k <= kmax; k++)
            {
                diag -= lower[((i + k) * p) + k - 1] * b[((i + k) * (p + 1)) + k];
            }

            b[i * (p + 1)] = diag;
        }
    }

    private static double Band(Span<double> b, int p, int r, int c) =>
        r >= c ? b[(r * (p + 1)) + r - c] : b[(c * (p + 1)) + c - r];
}
