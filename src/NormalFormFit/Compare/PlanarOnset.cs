namespace NormalFormFit.Compare;

/// <summary>The onset of a planar system found by simulation: the bracket [silent, firing] in μ_lab and the rest state on the silent side.</summary>
/// <param name="Value">Midpoint of the final bracket (NaN when no change from silent to firing was found).</param>
/// <param name="HalfWidth">Half the bracket's width: the resolution of the bisection.</param>
/// <param name="SilentLab">μ_lab of the bracket's silent end.</param>
/// <param name="RestX0">State where the system settles at the silent end.</param>
/// <param name="RestX1">State where the system settles at the silent end.</param>
internal sealed record SimulatedOnset(double Value, double HalfWidth, double SilentLab, double RestX0, double RestX1);

/// <summary>A fold (saddle-node) of the system's equilibria: f = g = 0 and det J = 0.</summary>
/// <param name="MuModel">μ_model at the fold.</param>
/// <param name="MuLab">The same through the map, (μ_model − c₀)/c₁.</param>
/// <param name="X0">Equilibrium at the fold.</param>
/// <param name="X1">Equilibrium at the fold.</param>
internal sealed record Fold(double MuModel, double MuLab, double X0, double X1);

/// <summary>
/// Onset of a planar system two ways. <b>By simulation</b>: the runs' μ_lab are classified firing or silent by
/// <see cref="PlanarCycle"/>; the first change from silent to firing (extended below the runs with doubling steps when
/// every run fires) is bisected to a width of 10⁻⁵ of the runs' span (at most 40 halvings). "Firing" means a cycle
/// settled within the time cap, so a cycle slower than about a quarter of the cap is silent: the onset found this way
/// lies above the true one by about (the cap's quarter)⁻² in the square-root law of a saddle-node on the circle.
/// <b>By the fold of the equilibria</b> (for a saddle-node on the invariant circle): Newton's method on
/// F(x, y, μ) = (f, g, det J) from the rest state at the silent end, J by central differences of the field (steps 10⁻⁵
/// of each variable's size) and the 3×3 Newton matrix by central differences of F (steps 10⁻⁴), solved by Gaussian
/// elimination with partial pivoting. This extended system is regular at a non-degenerate fold (Kuznetsov, Elements of
/// Applied Bifurcation Theory, 3rd ed., 2004, §10.2 — section from memory).
/// </summary>
internal static class PlanarOnset
{
    public static SimulatedOnset? BySimulation(PlanarProblem problem, double[] full)
    {
        var labs = problem.Runs.Select(r => r.MuLab).Distinct().Order().ToArray();
        var span = Math.Max(labs[^1] - labs[0], 1e-3 * Math.Max(Math.Abs(labs[^1]), 1.0));
        var outcomes = labs.Select(m => problem.Cycle(full, m)).ToArray();
        if (outcomes.Any(o => o.Failed))
        {
            return null;
        }

        // lo: the silent end, hi: the firing end (lo > hi when the model fires below the silent runs).
        double lo, hi;
        CycleOutcome atLo;
        var change = FirstChange(outcomes);
        if (change > 0)
        {
            (lo, hi, atLo) = outcomes[change].Fires ? (labs[change - 1], labs[change], outcomes[change - 1]) : (labs[change], labs[change - 1], outcomes[change]);
        }
        else if (outcomes.All(o => o.Fires))
        {
            // The model fires at every run: look below them, doubling the step.
            hi = labs[0];
            lo = double.NaN;
            atLo = default;
            var step = span;
            for (var k = 0; k < 20; k++)
            {
                var m = hi - step;
                var o = problem.Cycle(full, m);
                if (o.Failed)
                {
                    return null;
                }

                if (!o.Fires)
                {
                    lo = m;
                    atLo = o;
                    break;
                }

                hi = m;
                step *= 2;
            }

            if (double.IsNaN(lo))
            {
                return null;
            }
        }
        else
        {
            return null;
        }

        for (var k = 0; k < 40 && Math.Abs(hi - lo) > 1e-5 * span; k++)
        {
            var m = 0.5 * (lo + hi);
            var o = problem.Cycle(full, m);
            if (o.Failed)
            {
                return null;
            }

            if (o.Fires)
            {
                hi = m;
            }
            else
            {
                lo = m;
                atLo = o;
            }
        }

        return new SimulatedOnset(0.5 * (lo + hi), 0.5 * Math.Abs(hi - lo), lo, atLo.X0, atLo.X1);
    }

    /// <summary>Index of the first run (sorted by μ_lab) that fires or not unlike the one before; −1 when none.</summary>
    private static int FirstChange(CycleOutcome[] outcomes)
    {
        for (var i = 1; i < outcomes.Length; i++)
        {
            if (outcomes[i - 1].Fires != outcomes[i].Fires)
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>The fold nearest the start (the rest state and μ_model at the silent end); null when Newton does not converge.</summary>
    public static Fold? FoldNear(PlanarProblem problem, double[] full, double x0, double x1, double muLab)
    {
        var pars = full[..problem.ParameterCount];
        var field = problem.Model.CreateField(pars, problem.MuModel(full, muLab));
        var s0 = Math.Max(Math.Abs(x0), 1e-2);
        var s1 = Math.Max(Math.Abs(x1), 1e-2);
        var sm = Math.Max(Math.Abs(field.Mu), 1e-2);
        double[] F(double a, double b, double m)
        {
            field.Mu = m;
            field.Rate(a, b, out var f, out var g);
            var ha = 1e-5 * s0;
            var hb = 1e-5 * s1;
            field.Rate(a + ha, b, out var fa1, out var ga1);
            field.Rate(a - ha, b, out var fa2, out var ga2);
            field.Rate(a, b + hb, out var fb1, out var gb1);
            field.Rate(a, b - hb, out var fb2, out var gb2);
            var j00 = (fa1 - fa2) / (2 * ha);
            var j10 = (ga1 - ga2) / (2 * ha);
            var j01 = (fb1 - fb2) / (2 * hb);
            var j11 = (gb1 - gb2) / (2 * hb);
            return [f, g, (j00 * j11) - (j01 * j10)];
        }

        var z = new[] { x0, x1, field.Mu };
        var scale = new[] { s0, s1, sm };
        for (var it = 0; it < 60; it++)
        {
            var f0 = F(z[0], z[1], z[2]);
            if (!f0.All(double.IsFinite))
            {
                return null;
            }

            var jac = new double[3, 3];
            for (var c = 0; c < 3; c++)
            {
                var h = 1e-4 * scale[c];
                var zp = (double[])z.Clone();
                var zm = (double[])z.Clone();
                zp[c] += h;
                zm[c] -= h;
                var fp = F(zp[0], zp[1], zp[2]);
                var fm = F(zm[0], zm[1], zm[2]);
                for (var r = 0; r < 3; r++)
                {
                    jac[r, c] = (fp[r] - fm[r]) / (2 * h);
                }
            }

            if (Solve3(jac, [-f0[0], -f0[1], -f0[2]]) is not { } dz)
            {
                return null;
            }

            // Damped: no step longer than the variables' own sizes.
            var longest = Enumerable.Range(0, 3).Max(i => Math.Abs(dz[i]) / scale[i]);
            var damp = longest > 0.5 ? 0.5 / longest : 1.0;
            for (var i = 0; i < 3; i++)
            {
                z[i] += damp * dz[i];
            }

            if (damp == 1.0 && Enumerable.Range(0, 3).All(i => Math.Abs(dz[i]) <= 1e-11 * scale[i]))
            {
                var c1 = full[problem.ParameterCount + 1];
                return new Fold(z[2], (z[2] - full[problem.ParameterCount]) / c1, z[0], z[1]);
            }
        }

        return null;
    }

    /// <summary>Ax = b for 3×3 by Gaussian elimination with partial pivoting; null when singular.</summary>
    private static double[]? Solve3(double[,] a, double[] b)
    {
        const int n = 3;
        for (var k = 0; k < n; k++)
        {
            var p = k;
            for (var i = k + 1; i < n; i++)
            {
                if (Math.Abs(a[i, k]) > Math.Abs(a[p, k]))
                {
                    p = i;
                }
            }

            if (!(Math.Abs(a[p, k]) > 1e-300))
            {
                return null;
            }

            if (p != k)
            {
                for (var j = 0; j < n; j++)
                {
                    (a[k, j], a[p, j]) = (a[p, j], a[k, j]);
                }

                (b[k], b[p]) = (b[p], b[k]);
            }

            for (var i = k + 1; i < n; i++)
            {
                var f = a[i, k] / a[k, k];
                for (var j = k; j < n; j++)
                {
                    a[i, j] -= f * a[k, j];
                }

                b[i] -= f * b[k];
            }
        }

        var x = new double[n];
        for (var i = n - 1; i >= 0; i--)
        {
            var s = b[i];
            for (var j = i + 1; j < n; j++)
            {
                s -= a[i, j] * x[j];
            }

            x[i] = s / a[i, i];
        }

        return x.All(double.IsFinite) ? x : null;
    }
}
