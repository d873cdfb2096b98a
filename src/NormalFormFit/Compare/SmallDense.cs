namespace NormalFormFit.Compare;

/// <summary>
/// Dense linear algebra for the handful of unknowns of a model fit: Cholesky factor A = LLᵀ of a symmetric
/// positive-definite matrix (Golub &amp; Van Loan 2013, alg. 4.2.1), solves and the inverse. O(k³); k is small.
/// </summary>
internal static class SmallDense
{
    /// <summary>Lower Cholesky factor, or null when <paramref name="a"/> is not numerically positive definite.</summary>
    public static double[,]? Cholesky(double[,] a)
    {
        var n = a.GetLength(0);
        var l = new double[n, n];
        for (var j = 0; j < n; j++)
        {
            var d = a[j, j];
            for (var k = 0; k < j; k++)
            {
                d -= l[j, k] * l[j, k];
            }

            // Relative pivot test: a pivot lost to rounding means the matrix is singular for our purposes.
            if (!(d > 1e-13 * Math.Abs(a[j, j])) || !double.IsFinite(d))
            {
                return null;
            }

            l[j, j] = Math.Sqrt(d);
            for (var i = j + 1; i < n; i++)
            {
                var s = a[i, j];
                for (var k = 0; k < j; k++)
                {
                    s -= l[i, k] * l[j, k];
                }

                l[i, j] = s / l[j, j];
            }
        }

        return l;
    }

    /// <summary>Solves LLᵀx = b.</summary>
    public static double[] Solve(double[,] l, ReadOnlySpan<double> b)
    {
        var n = b.Length;
        var y = new double[n];
        for (var i = 0; i < n; i++)
        {
            var s = b[i];
            for (var k = 0; k < i; k++)
            {
                s -= l[i, k] * y[k];
            }

            y[i] = s / l[i, i];
        }

        for (var i = n - 1; i >= 0; i--)
        {
            var s = y[i];
            for (var k = i + 1; k < n; k++)
            {
                s -= l[k, i] * y[k];
            }

            y[i] = s / l[i, i];
        }

        return y;
    }

    /// <summary>A⁻¹ from the Cholesky factor of A.</summary>
    public static double[,] Inverse(double[,] l)
    {
        var n = l.GetLength(0);
        var inv = new double[n, n];
        var e = new double[n];
        for (var j = 0; j < n; j++)
        {
            Array.Clear(e);
            e[j] = 1.0;
            var col = Solve(l, e);
            for (var i = 0; i < n; i++)
            {
                inv[i, j] = col[i];
            }
        }

        return inv;
    }
}
