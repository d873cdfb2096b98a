namespace NormalFormFit.Smoothing;

/// <summary>
/// A symmetric n×n matrix whose non-zero entries lie within <see cref="HalfBandwidth"/> of the diagonal.
/// Only the lower band is stored: (p + 1)·n numbers.
/// </summary>
public sealed class SymmetricBandedMatrix
{
    // Row-major lower band: entry (i, i − k), k = 0..p, at data[i·(p + 1) + k].
    private readonly double[] data;

    /// <summary>Creates a zero matrix of the given order and half-bandwidth.</summary>
    /// <param name="order">Number of rows and columns (at least 1).</param>
    /// <param name="halfBandwidth">p ≥ 0: entries (i, j) with |i − j| &gt; p are zero.</param>
    public SymmetricBandedMatrix(int order, int halfBandwidth)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(order, 1);
        ArgumentOutOfRangeException.ThrowIfNegative(halfBandwidth);
        Order = order;
        HalfBandwidth = halfBandwidth;
        data = new double[checked(order * (halfBandwidth + 1))];
    }

    /// <summary>Number of rows (and columns).</summary>
    public int Order { get; }

    /// <summary>p: entries further than p from the diagonal are zero.</summary>
    public int HalfBandwidth { get; }

    /// <summary>
    /// Entry (row, column). Reading outside the band gives 0; writing outside the band throws.
    /// Writing (i, j) also sets (j, i).
    /// </summary>
    public double this[int row, int column]
    {
        get
        {
            CheckIndex(row, column);
            var (i, k) = row >= column ? (row, row - column) : (column, column - row);
            return k > HalfBandwidth ? 0.0 : data[(i * (HalfBandwidth + 1)) + k];
        }

        set
        {
            CheckIndex(row, column);
            var (i, k) = row >= column ? (row, row - column) : (column, column - row);
            if (k > HalfBandwidth)
            {
                throw new ArgumentOutOfRangeException(nameof(column), "Entry lies outside the band.");
            }

            data[(i * (HalfBandwidth + 1)) + k] = value;
        }
    }

    /// <summary>Factorises the matrix as L·D·Lᵀ (see <see cref="BandedLdlt"/>); O(n p²).</summary>
    /// <exception cref="ArgumentException">The matrix is not (numerically) positive definite.</exception>
    public BandedLdlt Factorize() => BandedLdlt.Factorize(this);

    /// <summary>The stored lower band, row-major: entry (i, i − k) at [i·(p + 1) + k].</summary>
    internal ReadOnlySpan<double> LowerBand => data;

    /// <summary>Writable lower band, for builders inside the library.</summary>
    internal Span<double> LowerBandForWriting => data;

    private void CheckIndex(int row, int column)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(row);
        ArgumentOutOfRangeException.ThrowIfNegative(column);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(row, Order);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(column, Order);
    }
}
