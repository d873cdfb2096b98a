namespace NormalFormFit.Compare;

/// <summary>
/// The onset of a fitted model: the lab parameter at which its minimum speed over θ, g(μ_lab) = min_θ s·f(θ, c₀ + c₁μ_lab),
/// reaches zero. The sign s of turning is that of the runs (the model's own θ is used: min over θ of s·f(sθ) equals min
/// over θ of s·f(θ)). A sign change of g between two runs' μ is bracketed there, else outwards from the slower end with
/// doubling steps; the root by regula falsi, Illinois variant (Dowell &amp; Jarratt 1971).
/// </summary>
internal sealed class OnsetSearch(ComparisonProblem problem)
{
    private const int OnsetGrid = 96;
    private readonly double[] labs = [.. problem.Runs.Select(r => r.MuLab).Distinct().Order()];
    private readonly int sign = problem.Runs.Sum(r => r.Sign) >= 0 ? 1 : -1;

    /// <summary>The onset μ_lab at the full parameters (expression's, then c₀, c₁); NaN when g does not reach zero within reach.</summary>
    public double Find(double[] full)
    {
        var pCount = problem.ParameterCount;
        var pars = full[..pCount];
        var c0 = full[pCount];
        var c1 = full[pCount + 1];
        var eval = problem.Evaluator();
        double G(double muLab) => MinSpeed(eval, c0 + (c1 * muLab), pars);

        var lo = labs[0];
        var hi = labs[^1];
        var glo = G(lo);
        var ghi = G(hi);
        if (!double.IsFinite(glo) || !double.IsFinite(ghi))
        {
            return double.NaN;
        }

        // A crossing between two runs.
        var prevX = lo;
        var prevG = glo;
        for (var i = 1; i < labs.Length; i++)
        {
            var g = i == labs.Length - 1 ? ghi : G(labs[i]);
            if (Math.Sign(g) != Math.Sign(prevG))
            {
                return Numerics.RootFinding.RegulaFalsi(G, prevX, prevG, labs[i], g);
            }

            prevX = labs[i];
            prevG = g;
        }

        if (glo <= 0 && ghi <= 0)
        {
            return double.NaN;
        }

        // Extend outwards on the slower side, doubling the step.
        var span = Math.Max(hi - lo, 1e-3 * Math.Max(Math.Abs(hi), 1.0));
        var down = glo < ghi;
        var x0 = down ? lo : hi;
        var g0 = down ? glo : ghi;
        for (var k = 0; k < 30; k++)
        {
            var x1 = down ? x0 - span : x0 + span;
            var g1 = G(x1);
            if (!double.IsFinite(g1))
            {
                return double.NaN;
            }

            if (g1 <= 0)
            {
                return Numerics.RootFinding.RegulaFalsi(G, x0, g0, x1, g1);
            }

            if (g1 >= g0)
            {
                return double.NaN; // the minimum speed stops falling: no onset on this side
            }

            x0 = x1;
            g0 = g1;
            span *= 2.0;
        }

        return double.NaN;
    }

    /// <summary>min over θ of the run-oriented speed: a grid of 96 phases, then Brent's minimiser on the best cell.</summary>
    private double MinSpeed(ModelExpression.Evaluator eval, double muModel, double[] pars)
    {
        var h = 2.0 * Math.PI / OnsetGrid;
        var best = double.PositiveInfinity;
        var at = 0;
        for (var i = 0; i < OnsetGrid; i++)
        {
            var f = sign * eval.Evaluate(i * h, muModel, pars, []);
            if (!double.IsFinite(f))
            {
                return double.NaN;
            }

            if (f < best)
            {
                best = f;
                at = i;
            }
        }

        var x = at * h;
        double F(double t) => sign * eval.Evaluate(t, muModel, pars, []);
        var refined = F(Numerics.Brent.Minimize(F, x - h, x + h, x, best, 1e-10));
        return double.IsFinite(refined) ? Math.Min(best, refined) : best;
    }
}
