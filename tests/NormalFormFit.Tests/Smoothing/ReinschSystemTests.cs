using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Tests.Smoothing;

/// <summary>
/// The fused pentadiagonal kernel of the spline against the general <see cref="BandedLdlt"/> and a dense
/// MathNet.Numerics 5.0.0 hat matrix A = I − λW⁻¹Q(R + λQᵀW⁻¹Q)⁻¹Qᵀ (Green &amp; Silverman 1994, ch. 2).
/// </summary>
public class ReinschSystemTests
{
    [Theory]
    [InlineData(3, 0.7, false)]
    [InlineData(4, 0.01, true)]
    [InlineData(30, 5.0, false)]
    [InlineData(30, 1e4, true)]
    public void Traces_MatchDenseHatMatrix(int n, double lambda, bool weighted)
    {
        var rng = new Random(n);
        var t = new double[n];
        var y = new double[n];
        var w = new double[n];
        double s = 0.0;
        for (int i = 0; i < n; i++)
        {
            s += 0.2 + (1.6 * rng.NextDouble());
            t[i] = s;
            y[i] = Math.Sin(s) + (0.1 * (rng.NextDouble() - 0.5));
            w[i] = weighted ? 0.3 + rng.NextDouble() : 1.0;
        }

        // Mean spacing is not 1 and weights do not average 1: the rescaling is exercised.
        var system = new ReinschSystem(t, y, weighted ? w : default);
        var residuals = new double[n];
        var point = system.Evaluate(lambda, residuals);

        // Dense reference in the rescaled units the system uses.
        double hs = system.TimeScale, ws = system.WeightScale;
        int m = n - 2;
        var q = Matrix<double>.Build.Dense(n, m);
        var r = Matrix<double>.Build.Dense(m, m);
        var winv = Matrix<double>.Build.Diagonal(n, n, i => ws / w[i]);
        for (int j = 0; j < m; j++)
        {
            double h0 = (t[j + 1] - t[j]) / hs, h1 = (t[j + 2] - t[j + 1]) / hs;
            q[j, j] = 1 / h0;
            q[j + 1, j] = (-1 / h0) - (1 / h1);
            q[j + 2, j] = 1 / h1;
            r[j, j] = (h0 + h1) / 3;
            if (j + 1 < m)
            {
                r[j, j + 1] = h1 / 6;
                r[j + 1, j] = h1 / 6;
            }
        }

        var mm = r + (lambda * q.Transpose() * winv * q);
        var iMinusA = lambda * winv * q * mm.Inverse() * q.Transpose();
        var yv = Vector<double>.Build.DenseOfArray(y);
        var expectedResiduals = iMinusA * yv;

        // Condition numbers here are below 1e8 (λ = 1e4 case): 1e-9 relative covers dense inversion error.
        Assert.Equal(n - iMinusA.Trace(), point.TraceA, 1e-9 * n);
        Assert.Equal(iMinusA.Trace(), point.ResidualDegrees, 1e-9 * n);
        for (int i = 0; i < n; i++)
        {
            Assert.Equal(expectedResiduals[i], residuals[i], 1e-9);
        }

        // The same band through the general kernel: tr(M⁻¹R) from BandedLdlt.InverseBand.
        var banded = new SymmetricBandedMatrix(m, 2);
        for (int i = 0; i < m; i++)
        {
            for (int j = Math.Max(0, i - 2); j <= i; j++)
            {
                banded[i, j] = mm[i, j];
            }
        }

        var band = banded.Factorize().InverseBand();
        double traceRMinv = 0.0;
        for (int i = 0; i < m; i++)
        {
            for (int j = Math.Max(0, i - 1); j <= Math.Min(m - 1, i + 1); j++)
            {
                traceRMinv += band[i, j] * r[j, i];
            }
        }

        Assert.Equal(traceRMinv, point.TraceRMinv, 1e-12 * n);
    }
}
