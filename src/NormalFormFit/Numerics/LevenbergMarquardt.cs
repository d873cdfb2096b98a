using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;

namespace NormalFormFit.Numerics;

/// <summary>Residuals r(q) of a least-squares problem and their Jacobian ∂rᵢ/∂q_u at the parameters q.</summary>
/// <param name="parameters">The parameters q (not to be changed).</param>
/// <param name="residuals">The residuals rᵢ, one per data point.</param>
/// <param name="jacobian">The Jacobian, one row per residual and one column per parameter.</param>
/// <returns>False when a residual or derivative is not finite; the fitter then treats q as out of reach.</returns>
public delegate bool ResidualsAndJacobian(double[] parameters, out double[] residuals, out double[,] jacobian);

/// <summary>Why a Levenberg–Marquardt fit stopped.</summary>
public enum LevenbergMarquardtExit
{
    /// <summary>An accepted step lowered Σr² by less than the relative tolerance: converged.</summary>
    CostConverged,

    /// <summary>The step, relative to the parameters, fell below the tolerance: converged.</summary>
    StepConverged,

    /// <summary>No step lowers Σr² at any damping: a (possibly flat) minimum.</summary>
    NoDescent,

    /// <summary>There is nothing to fit (no parameters): the start is the answer.</summary>
    NoParameters,

    /// <summary>The iteration limit came first: not converged, the parameters may not be the best.</summary>
    MaxIterations,

    /// <summary>The residuals or the Jacobian are not finite at the start: no fit.</summary>
    InvalidStart,
}

/// <summary>
/// The result of a Levenberg–Marquardt fit: the parameters q̂, the residuals and Jacobian there, the covariance
/// s²(JᵀJ)⁻¹ with s² = Σr²/(n − k), the iterations and why the fit stopped.
/// </summary>
/// <param name="Parameters">The fitted parameters q̂ (the start when <see cref="Exit"/> is <see cref="LevenbergMarquardtExit.InvalidStart"/>).</param>
/// <param name="Residuals">The residuals at q̂ (empty when the start was invalid).</param>
/// <param name="Jacobian">The Jacobian at q̂ (no rows when the start was invalid).</param>
/// <param name="Iterations">Iterations done (each computes one Jacobian).</param>
/// <param name="Exit">Why the fit stopped.</param>
/// <param name="Covariance">
/// s²(JᵀJ)⁻¹ at q̂, the usual large-sample covariance of a nonlinear least-squares estimate (Seber &amp; Wild 1989,
/// §2.1; the one NIST StRD certifies); null when there are no more points than parameters or J is rank deficient.
/// </param>
public sealed record LevenbergMarquardtResult(
    double[] Parameters, double[] Residuals, double[,] Jacobian, int Iterations, LevenbergMarquardtExit Exit, double[,]? Covariance)
{
    /// <summary>True unless the iteration limit came first or the start was invalid.</summary>
    public bool Converged => Exit is LevenbergMarquardtExit.CostConverged or LevenbergMarquardtExit.StepConverged
        or LevenbergMarquardtExit.NoDescent or LevenbergMarquardtExit.NoParameters;

    /// <summary>Σr² at q̂.</summary>
    public double SumOfSquares => Residuals.Sum(x => x * x);

    /// <summary>Standard errors √diag(covariance); NaN where there is no covariance.</summary>
    public double[] StandardErrors => Covariance is { } c
        ? [.. Enumerable.Range(0, Parameters.Length).Select(u => Math.Sqrt(c[u, u]))]
        : [.. Parameters.Select(_ => double.NaN)];
}

/// <summary>Settings of a Levenberg–Marquardt fit; the defaults suit a fit whose parameters need 4–6 significant digits.</summary>
public sealed record LevenbergMarquardtOptions
{
    /// <summary>Iterations at most (each computes one Jacobian).</summary>
    public int MaxIterations { get; init; } = 200;

    /// <summary>Stop when an accepted step lowers Σr² by less than this, relative to Σr².</summary>
    public double CostTolerance { get; init; } = 1e-10;

    /// <summary>Stop when an accepted step moves no parameter by more than this, relative to |q_u| + 1e-8.</summary>
    public double StepTolerance { get; init; } = 1e-10;

    /// <summary>Defaults.</summary>
    public static LevenbergMarquardtOptions Default { get; } = new();
}

/// <summary>
/// Nonlinear least squares min Σrᵢ(q)² by Levenberg (1944) – Marquardt (1963) with Marquardt's diagonal scaling:
/// solve (JᵀJ + λ·diag JᵀJ)δ = −Jᵀr by Cholesky; accept δ when Σr² does not rise (then λ ÷ 3), else λ × 4.
/// Stops (<see cref="LevenbergMarquardtOptions"/>) when an accepted step lowers Σr² or moves the parameters by less
/// than its tolerance, relative; when a refused step is below 1e-12 relative (or the step tolerance, if smaller);
/// when no damping up to 1e16 lowers Σr²; or at the iteration limit. Cost per iteration O(n·k² + k³) plus one
/// evaluation of r and J per trial step. Checked against NIST StRD certified values (Misra1a, Thurber, MGH09).
/// </summary>
public static class LevenbergMarquardt
{
    private const double InitialDamping = 1e-3;
    private const double MaxDamping = 1e16;
    private const double MinDamping = 1e-12;
    private const double RejectedStepTolerance = 1e-12;

    /// <summary>Fits from <paramref name="start"/> (not changed).</summary>
    /// <param name="residuals">Residuals and Jacobian at given parameters.</param>
    /// <param name="start">Starting parameters.</param>
    /// <param name="options">Settings; defaults when null.</param>
    /// <returns>The fit, with its exit reason.</returns>
    public static LevenbergMarquardtResult Minimize(ResidualsAndJacobian residuals, double[] start, LevenbergMarquardtOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ArgumentNullException.ThrowIfNull(start);
        options ??= LevenbergMarquardtOptions.Default;
        ArgumentOutOfRangeException.ThrowIfLessThan(options.MaxIterations, 1);
        ArgumentOutOfRangeException.ThrowIfNegative(options.CostTolerance);
        ArgumentOutOfRangeException.ThrowIfNegative(options.StepTolerance);
        var maxIterations = options.MaxIterations;
        var costTolerance = options.CostTolerance;
        var stepTolerance = options.StepTolerance;
        var rejectedStepTolerance = Math.Min(RejectedStepTolerance, stepTolerance);
        var k = start.Length;
        var q = (double[])start.Clone();
        if (!residuals(q, out var r, out var jac))
        {
            return new LevenbergMarquardtResult(q, [], new double[0, k], 0, LevenbergMarquardtExit.InvalidStart, null);
        }

        var cost = r.Sum(x => x * x);
        var lambda = InitialDamping;
        var iterations = 0;
        var exit = k == 0 ? LevenbergMarquardtExit.NoParameters : LevenbergMarquardtExit.MaxIterations;
        var converged = k == 0;
        while (!converged && iterations < maxIterations)
        {
            iterations++;
            var (a, g) = NormalEquations(r, jac, k);
            var accepted = false;
            while (lambda < MaxDamping)
            {
                var damped = (double[,])a.Clone();
                for (var u = 0; u < k; u++)
                {
                    damped[u, u] += lambda * Math.Max(a[u, u], 1e-12);
                }

                var step = SolveSpd(damped, g);
                if (step is null)
                {
                    lambda *= 4.0;
                    continue;
                }

                var trial = new double[k];
                var relStep = 0.0;
                for (var u = 0; u < k; u++)
                {
                    trial[u] = q[u] - step[u];
                    relStep = Math.Max(relStep, Math.Abs(step[u]) / (Math.Abs(q[u]) + 1e-8));
                }

                if (residuals(trial, out var rt, out var jt))
                {
                    var trialCost = rt.Sum(x => x * x);
                    if (trialCost <= cost)
                    {
                        var fall = (cost - trialCost) / Math.Max(cost, 1e-300);
                        q = trial;
                        r = rt;
                        jac = jt;
                        cost = trialCost;
                        lambda = Math.Max(lambda / 3.0, MinDamping);
                        accepted = true;
                        converged = fall < costTolerance || relStep < stepTolerance;
                        if (converged)
                        {
                            exit = fall < costTolerance ? LevenbergMarquardtExit.CostConverged : LevenbergMarquardtExit.StepConverged;
                        }

                        break;
                    }
                }

                if (relStep < rejectedStepTolerance)
                {
                    converged = true;
                    exit = LevenbergMarquardtExit.StepConverged;
                    break;
                }

                lambda *= 4.0;
            }

            if (!accepted && !converged)
            {
                converged = true;
                exit = LevenbergMarquardtExit.NoDescent;
            }
        }

        return new LevenbergMarquardtResult(q, r, jac, iterations, exit, Covariance(r, jac, k));
    }

    /// <summary>JᵀJ and Jᵀr, accumulated row by row.</summary>
    private static (double[,] A, double[] G) NormalEquations(double[] r, double[,] jac, int k)
    {
        var a = new double[k, k];
        var g = new double[k];
        for (var i = 0; i < r.Length; i++)
        {
            for (var u = 0; u < k; u++)
            {
                g[u] += jac[i, u] * r[i];
                for (var v = 0; v <= u; v++)
                {
                    a[u, v] += jac[i, u] * jac[i, v];
                }
            }
        }

        for (var u = 0; u < k; u++)
        {
            for (var v = 0; v < u; v++)
            {
                a[v, u] = a[u, v];
            }
        }

        return (a, g);
    }

    /// <summary>
    /// Solves Ax = b for a symmetric positive-definite A by MathNet's Cholesky factorisation A = LLᵀ; null when A is
    /// not numerically positive definite: MathNet finds a pivot ≤ 0, or a pivot L_jj² has lost all but 1e-13 of A_jj
    /// to rounding.
    /// </summary>
    private static double[]? SolveSpd(double[,] a, double[] b)
    {
        Cholesky<double> chol;
        try
        {
            chol = Matrix<double>.Build.DenseOfArray(a).Cholesky();
        }
        catch (ArgumentException)
        {
            return null;
        }

        var l = chol.Factor;
        for (var j = 0; j < l.RowCount; j++)
        {
            var d = l[j, j] * l[j, j];
            if (!(d > 1e-13 * Math.Abs(a[j, j])) || !double.IsFinite(d))
            {
                return null;
            }
        }

        return chol.Solve(Vector<double>.Build.DenseOfArray(b)).ToArray();
    }

    /// <summary>
    /// s²(JᵀJ)⁻¹ = s²·R⁻¹R⁻ᵀ from the Householder QR of J with its columns scaled to unit length (MathNet's QR; Golub
    /// &amp; Van Loan 2013, §5.3), which avoids squaring J's condition number; null when n ≤ k or J is rank deficient.
    /// </summary>
    private static double[,]? Covariance(double[] r, double[,] jac, int k)
    {
        var n = r.Length;
        if (n <= k || k == 0)
        {
            return null;
        }

        var j = Matrix<double>.Build.DenseOfArray(jac);
        var scale = new double[k];
        for (var u = 0; u < k; u++)
        {
            scale[u] = j.Column(u).L2Norm();
            if (!(scale[u] > 0.0) || !double.IsFinite(scale[u]))
            {
                return null;
            }

            j.SetColumn(u, j.Column(u) / scale[u]);
        }

        var rFactor = j.QR(QRMethod.Thin).R;
        for (var u = 0; u < k; u++)
        {
            if (!(Math.Abs(rFactor[u, u]) > 1e-12))
            {
                return null;
            }
        }

        var rInverse = rFactor.Inverse();
        var unscaled = rInverse * rInverse.Transpose();
        var s2 = r.Sum(x => x * x) / (n - k);
        var cov = new double[k, k];
        for (var u = 0; u < k; u++)
        {
            for (var v = 0; v < k; v++)
            {
                cov[u, v] = s2 * unscaled[u, v] / (scale[u] * scale[v]);
            }
        }

        return cov;
    }
}
