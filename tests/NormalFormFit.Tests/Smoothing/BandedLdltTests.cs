using MathNet.Numerics.LinearAlgebra;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Tests.Smoothing;

/// <summary>Banded LDLᵀ, solve and band of the inverse against dense MathNet.Numerics 5.0.0.</summary>
public class BandedLdltTests
{
    // Random diagonally dominant SPD band matrices have condition numbers below ~10, so a dense LU and
    // our banded LDLᵀ agree to a few units of 1e-16; 1e-12 relative leaves margin and still catches any
    // indexing error (which shows up at order 1e-2 or more).
    private const double Tolerance = 1e-12;

    [Theory]
    [InlineData(1, 0)]
    [InlineData(7, 1)]
    [InlineData(40, 2)]
    [InlineData(33, 3)]
    [InlineData(25, 5)]
    [InlineData(4, 6)]
    public void Solve_OnRandomSpdBandMatrix_MatchesMathNetDenseSolve(int n, int p)
    {
        var (banded, dense) = RandomSpd(n, p, seed: (n * 31) + p);
        var rng = new Random(n + p);
        var b = Enumerable.Range(0, n).Select(_ => rng.NextDouble() - 0.5).ToArray();
        var bCopy = (double[])b.Clone();

        var x = banded.Factorize().Solve(b);
        var reference = dense.Solve(Vector<double>.Build.DenseOfArray(b)); // MathNet 5.0.0 Matrix.Solve (LU)

        Assert.Equal(bCopy, b);
        for (int i = 0; i < n; i++)
        {
            Assert.Equal(reference[i], x[i], Tolerance * reference.AbsoluteMaximum());
        }
    }

    [Theory]
    [InlineData(1, 0)]
    [InlineData(7, 1)]
    [InlineData(40, 2)]
    [InlineData(33, 3)]
    [InlineData(25, 5)]
    [InlineData(4, 6)]
    public void InverseBand_OnRandomSpdBandMatrix_MatchesMathNetDenseInverseWithinBand(int n, int p)
    {
        var (banded, dense) = RandomSpd(n, p, seed: (n * 17) + p);

        var band = banded.Factorize().InverseBand();
        var inverse = dense.Inverse(); // MathNet 5.0.0 Matrix.Inverse
        double scale = inverse.Enumerate().Max(Math.Abs);

        for (int i = 0; i < n; i++)
        {
            for (int j = Math.Max(0, i - p); j <= Math.Min(n - 1, i + p); j++)
            {
                Assert.Equal(inverse[i, j], band[i, j], Tolerance * scale);
            }
        }
    }

    [Fact]
    public void Factorize_OnIndefiniteMatrix_Throws()
    {
        var a = new SymmetricBandedMatrix(3, 1);
        a[0, 0] = 1;
        a[1, 1] = 1;
        a[2, 2] = 1;
        a[0, 1] = 2; // leading 2×2 minor 1 − 4 < 0
        Assert.Throws<ArgumentException>(() => a.Factorize());
    }

    [Fact]
    public void Indexer_OutsideBand_ReadsZeroAndRefusesWrites()
    {
        var a = new SymmetricBandedMatrix(5, 1);
        a[3, 2] = 7.0;
        Assert.Equal(7.0, a[2, 3]);
        Assert.Equal(0.0, a[4, 1]);
        Assert.Throws<ArgumentOutOfRangeException>(() => a[4, 1] = 1.0);
    }

    private static (SymmetricBandedMatrix Banded, Matrix<double> Dense) RandomSpd(int n, int p, int seed)
    {
        var rng = new Random(seed);
        var banded = new SymmetricBandedMatrix(n, p);
        var dense = Matrix<double>.Build.Dense(n, n);
        for (int i = 0; i < n; i++)
        {
            for (int j = Math.Max(0, i - p); j < i; j++)
            {
                double v = rng.NextDouble() - 0.5;
                banded[i, j] = v;
                dense[i, j] = v;
                dense[j, i] = v;
            }
        }

        for (int i = 0; i < n; i++)
        {
            // Diagonal dominance makes it SPD (Gershgorin); the random part keeps it non-trivial.
            double d = (2.0 * p) + 0.5 + rng.NextDouble();
            banded[i, i] = d;
            dense[i, i] = d;
        }

        return (banded, dense);
    }
}
