using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Compare;

/// <summary>
/// Free parameters the data do not determine (docs/data-safety.md, clause 8): a Jacobian column that is zero, or
/// columns that are linearly dependent. Method: scale every column of the Jacobian J at the fit to unit length and
/// take its singular value decomposition (the scaled condition indices of Belsley, Kuh &amp; Welsch, "Regression
/// Diagnostics", Wiley 1980, §3.2); a singular value below <see cref="MinRelativeSingularValue"/> of the largest
/// marks the parameters with a large share in its right singular vector. JᵀJ is then singular or near-singular
/// and no standard error means anything. Cost O(n k²) for n residuals and k free parameters.
/// </summary>
internal static class Identifiability
{
    /// <summary>
    /// Smallest singular value of the scaled Jacobian, relative to the largest, of an identifiable set (10⁻⁶: a
    /// condition index of 10⁶, far beyond the index of 30 that Belsley et al. call strong dependence; only
    /// dependence exact up to rounding and smoothing noise is caught).
    /// </summary>
    public const double MinRelativeSingularValue = 1e-6;

    /// <summary>Share of a parameter in a near-null direction above which it is named (common practice, no source).</summary>
    private const double MinShare = 0.1;

    /// <summary>Indices of the free parameters that are not identifiable at <paramref name="free"/>; empty when all are.</summary>
    public static IReadOnlyList<int> Unidentifiable(ComparisonProblem problem, double[] free)
    {
        if (free.Length == 0 || !problem.Evaluate(free, out _, out var j))
        {
            return [];
        }

        var n = j.GetLength(0);
        var k = j.GetLength(1);
        var found = new SortedSet<int>();
        var keep = new List<int>();
        var norms = new double[k];
        for (var u = 0; u < k; u++)
        {
            var sum = 0.0;
            for (var i = 0; i < n; i++)
            {
                sum += j[i, u] * j[i, u];
            }

            norms[u] = Math.Sqrt(sum);
            if (norms[u] == 0 || !double.IsFinite(norms[u]))
            {
                found.Add(u);
            }
            else
            {
                keep.Add(u);
            }
        }

        if (keep.Count >= 2 && n >= keep.Count)
        {
            var m = Matrix<double>.Build.Dense(n, keep.Count, (i, c) => j[i, keep[c]] / norms[keep[c]]);
            var svd = m.Svd(computeVectors: true);
            var largest = svd.S[0];
            for (var s = 0; s < svd.S.Count; s++)
            {
                if (svd.S[s] < MinRelativeSingularValue * largest)
                {
                    for (var c = 0; c < keep.Count; c++)
                    {
                        if (Math.Abs(svd.VT[s, c]) > MinShare)
                        {
                            found.Add(keep[c]);
                        }
                    }
                }
            }
        }

        return [.. found];
    }
}
