using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Numerics;

/// <summary>One row of a weighted linear least-squares problem.</summary>
/// <param name="i">Index of the data point.</param>
/// <param name="basis">To fill with the basis functions' values g₀(i) … g_{p−1}(i).</param>
/// <param name="response">The response yᵢ.</param>
/// <param name="weight">The weight wᵢ = 1/σᵢ.</param>
/// <returns>False when the point lies outside the model (then the fit's χ² is +∞).</returns>
internal delegate bool WeightedRow(int i, double[] basis, out double response, out double weight);

/// <summary>
/// Weighted linear least squares, the inner step of every fit here that profiles a nonlinear parameter (μc, β):
/// minimises χ² = Σᵢ wᵢ²(yᵢ − Σₖ cₖgₖ(i))² by Householder QR of the weighted design (MathNet's QR; Golub &amp; Van Loan,
/// Matrix Computations, 4th ed., §5.3), which avoids squaring the condition number as the normal equations would.
/// </summary>
internal static class WeightedLinearFit
{
    /// <summary>χ² at the least-squares coefficients <paramref name="coef"/>; +∞ (coefficients 0) when a row lies outside the model.</summary>
    public static double ChiSquare(int n, int p, WeightedRow row, out double[] coef)
    {
        var x = Matrix<double>.Build.Dense(n, p);
        var y = Vector<double>.Build.Dense(n);
        var g = new double[p];
        for (var i = 0; i < n; i++)
        {
            if (!row(i, g, out var response, out var w))
            {
                coef = new double[p];
                return double.PositiveInfinity;
            }

            for (var k = 0; k < p; k++)
            {
                x[i, k] = g[k] * w;
            }

            y[i] = response * w;
        }

        var c = x.QR().Solve(y);
        coef = c.ToArray();
        var r = y - (x * c);
        return r.DotProduct(r);
    }
}
