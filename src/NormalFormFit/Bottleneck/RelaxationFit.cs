using NormalFormFit.Numerics;
using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Bottleneck;

/// <summary>
/// Exponential settling of a run that does not turn: θ(t) ≈ θ∞ + A·e^(−κ(t − t₀)) near its stable point.
/// </summary>
/// <param name="Rate">κ, the relaxation rate (per time unit), with standard error.</param>
/// <param name="RestPhase">θ∞ wrapped to [0, 2π), radians.</param>
/// <param name="Window">Largest distance |θ − θ∞| (rad) of the samples used.</param>
/// <param name="Samples">Samples used.</param>
/// <remarks>
/// Near the stable node of θ̇ = a + b(θ − θ*)², a &lt; 0, the linearisation gives κ = 2√(−ab) (Strogatz, Nonlinear
/// Dynamics and Chaos, 2nd ed., §2.4 and §4.3), so κ²/4 = −ab mirrors ab = π²/T² on the turning side.
/// </remarks>
public sealed record RelaxationFit(Estimate Rate, double RestPhase, double Window, int Samples)
{
    /// <summary>κ²/(4π²) with standard error: the value of −ab/π² below onset, continuing T⁻² = ab/π² through μc.</summary>
    public Estimate SquaredRateOverFourPiSquared
    {
        get
        {
            var k = Rate.Value;
            var c = 4.0 * Math.PI * Math.PI;
            return new Estimate(k * k / c, 2.0 * Math.Abs(k) * Rate.StandardError / c);
        }
    }
}

/// <summary>Fits the exponential settling of a run that does not turn.</summary>
public static class Relaxation
{
    private const int MinSamples = 20;

    /// <summary>
    /// Fits θ = θ∞ + A e^(−κ t) to the raw phase on the tail where it stays within δ of its final value, for
    /// δ = 1, ½, ¼, … rad while δ exceeds ten times the measurement noise; chooses the widest δ whose κ agrees with
    /// the next narrower one within two combined standard errors (outside the linear regime the decay is not a single
    /// exponential) and extrapolates that pair to a zero window (Richardson). Given κ, θ∞ and A are linear (weighted least squares); κ by golden section on log κ; standard error of κ from
    /// the Jacobian with the residual variance (white measurement noise). O(n) per δ. Null when the run is
    /// still moving or has not settled long enough to show the decay.
    /// </summary>
    public static RelaxationFit? Fit(ReadOnlySpan<double> time, ReadOnlySpan<double> rawPhase, ReadOnlySpan<double> smoothPhase, double noiseSd)
    {
        var n = time.Length;
        if (n < MinSamples || rawPhase.Length != n || smoothPhase.Length != n)
        {
            return null;
        }

        var tailFrom = Math.Max(n - Math.Max(n / 10, 5), 0);
        var end = SampleStatistics.Median(smoothPhase[tailFrom..]);
        var sigma = double.IsFinite(noiseSd) && noiseSd > 0 ? noiseSd : 0.0;
        var fits = new List<RelaxationFit>();
        for (var delta = 1.0; delta > 10 * sigma && delta > 1e-4; delta *= 0.5)
        {
            var start = n;
            while (start > 0 && Math.Abs(smoothPhase[start - 1] - end) <= delta)
            {
                start--;
            }

            // The tail must show decay: its first deviation well above the noise and at least a few samples.
            if (n - start < MinSamples || Math.Abs(smoothPhase[start] - end) < Math.Max(5 * sigma, 0.25 * delta))
            {
                break;
            }

            var fit = FitTail(time[start..], rawPhase[start..], delta);
            if (fit is null)
            {
                break;
            }

            fits.Add(fit);
        }

        if (fits.Count == 0)
        {
            return null;
        }

        // The quadratic term of the normal form about the node, θ̇ = −κe + be², biases κ by a fraction proportional to
        // the window: Richardson extrapolation of the pair (δ, δ/2), 2κ(δ/2) − κ(δ), removes it to first order; its
        // standard error treats the two fits as independent (conservative: they share samples).
        bool Agree(int i, double z) => i + 1 >= fits.Count || Math.Abs(fits[i].Rate.Value - fits[i + 1].Rate.Value)
            <= z * Math.Sqrt(Sq(fits[i].Rate.StandardError) + Sq(fits[i + 1].Rate.StandardError));
        for (var i = 0; i + 1 < fits.Count; i++)
        {
            // Two successive halvings must agree, so that one lucky agreement outside the linear regime is not enough.
            if ((Agree(i, 2) && Agree(i + 1, 2)) || i + 2 == fits.Count)
            {
                var k = (2 * fits[i + 1].Rate.Value) - fits[i].Rate.Value;
                var se = Math.Sqrt((4 * Sq(fits[i + 1].Rate.StandardError)) + Sq(fits[i].Rate.StandardError));
                return k > 0 ? fits[i + 1] with { Rate = new Estimate(k, se) } : fits[i + 1];
            }
        }

        return fits[^1];
    }

    private static RelaxationFit? FitTail(ReadOnlySpan<double> t, ReadOnlySpan<double> y, double window)
    {
        var n = t.Length;
        var t0 = t[0];
        var span = t[^1] - t0;
        if (!(span > 0))
        {
            return null;
        }

        var tt = new double[n];
        for (var i = 0; i < n; i++)
        {
            tt[i] = t[i] - t0;
        }

        var yy = y.ToArray();
        double Rss(double logK) => Inner(tt, yy, Math.Exp(logK), out _, out _);

        // κ between one e-fold over 20 tail lengths and 1000 e-folds over the tail.
        var lo = Math.Log(0.05 / span);
        var hi = Math.Log(1000.0 / span);
        var min = Numerics.GridSearch.Minimize(Rss, lo, hi, 40, 1e-9);
        if (min.OnEdge)
        {
            return null; // no decay resolved inside the record
        }

        var kappa = Math.Exp(min.X);
        var rss = Inner(tt, yy, kappa, out var rest, out var amp);
        if (n <= 3 || !(Math.Abs(amp) > 0))
        {
            return null;
        }

        // Jacobian of the model θ∞ + A e^(−κt) in (θ∞, A, κ).
        var j = Matrix<double>.Build.Dense(n, 3);
        for (var i = 0; i < n; i++)
        {
            var e = Math.Exp(-kappa * tt[i]);
            j[i, 0] = 1;
            j[i, 1] = e;
            j[i, 2] = -amp * tt[i] * e;
        }

        var cov = j.TransposeThisAndMultiply(j).Inverse() * (rss / (n - 3));
        var se = Math.Sqrt(cov[2, 2]);
        if (!double.IsFinite(se))
        {
            return null;
        }

        var wrapped = rest % (2 * Math.PI);
        return new RelaxationFit(new Estimate(kappa, se), wrapped < 0 ? wrapped + (2 * Math.PI) : wrapped, window, n);
    }

    private static double Inner(double[] t, double[] y, double kappa, out double rest, out double amp)
    {
        // Least squares of y on [1, e^(−κt)].
        double s1 = 0, se = 0, see = 0, sy = 0, sey = 0;
        for (var i = 0; i < t.Length; i++)
        {
            var e = Math.Exp(-kappa * t[i]);
            s1 += 1;
            se += e;
            see += e * e;
            sy += y[i];
            sey += e * y[i];
        }

        var det = (s1 * see) - (se * se);
        if (!(Math.Abs(det) > 1e-300))
        {
            rest = amp = double.NaN;
            return double.PositiveInfinity;
        }

        rest = ((see * sy) - (se * sey)) / det;
        amp = ((s1 * sey) - (se * sy)) / det;
        var rss = 0.0;
        for (var i = 0; i < t.Length; i++)
        {
            var r = y[i] - rest - (amp * Math.Exp(-kappa * t[i]));
            rss += r * r;
        }

        return rss;
    }

    private static double Sq(double x) => x * x;
}
