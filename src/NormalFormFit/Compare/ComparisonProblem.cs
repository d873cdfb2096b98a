using NormalFormFit.Analysis;
using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>
/// The least-squares problem of a model comparison: the data points, which parameters are free, and the residuals
/// and Jacobian of the model θ̇ = f(θ, c₀ + c₁·μ_lab; p) at given free parameters.
/// </summary>
/// <remarks>
/// Each field bin gives r = (⟨f⟩_bin − θ̇_bin)/SE_bin, ⟨f⟩_bin the model's mean over the bin's phase interval by 3-point
/// Gauss–Legendre, matching the field's phase-weighted bin means. Each measured period enters as a frequency,
/// r = (1/T_model − 1/T)/(SE_T/T²), T_model = ∮dθ/f by the trapezoid rule on 1024 points (exponentially accurate for
/// smooth periodic integrands; Trefethen &amp; Weideman 2014); 1/T_model goes to 0 continuously at the model's onset, so
/// a trial step past it stays finite. A run whose phase was negated to make it increase is compared with −f(−θ). The
/// Jacobian is exact, by forward-mode differentiation of the expression. Full parameters are the expression's
/// parameters, then c₀, c₁. Cost of one evaluation O(bins + 1024·periods) expression evaluations.
/// </remarks>
internal sealed class ComparisonProblem
{
    /// <summary>Trapezoid points of the period integral ∮dθ/f (and of the check that the model turns).</summary>
    public const int PeriodGrid = 1024;

    private static readonly double[] GaussNodes = [-Math.Sqrt(0.6), 0.0, Math.Sqrt(0.6)];
    private static readonly double[] GaussWeights = [5.0 / 18.0, 8.0 / 18.0, 5.0 / 18.0];
    private readonly ModelExpression model;
    private readonly double[] fullStart;
    private readonly int[] freeToFull;
    private readonly int[] fullToFree;
    private readonly List<(int Run, double Centre, double HalfWidth, double Value, double Se)> bins = [];
    private readonly List<(int Run, double Nu, double Se)> periods = [];
    private readonly List<RunResult> sources = [];
    [ThreadStatic]
    private static ModelExpression.Evaluator? cachedEvaluator;
    [ThreadStatic]
    private static ModelExpression? cachedOwner;

    private ComparisonProblem(ModelExpression model, double[] fullStart, bool[] free)
    {
        this.model = model;
        this.fullStart = fullStart;
        freeToFull = [.. Enumerable.Range(0, free.Length).Where(i => free[i])];
        fullToFree = new int[free.Length];
        Array.Fill(fullToFree, -1);
        for (var i = 0; i < freeToFull.Length; i++)
        {
            fullToFree[freeToFull[i]] = i;
        }
    }

    public List<RunData> Runs { get; } = [];

    public int RunCount => Runs.Count;

    public int FreeCount => freeToFull.Length;

    public int Points => bins.Count + periods.Count;

    public int ParameterCount => model.Parameters.Count;

    public ModelExpression Model => model;

    /// <summary>The problem for <paramref name="runs"/>; <paramref name="startFull"/> (all parameters, then c0, c1) overrides the options' starting values.</summary>
    public static ComparisonProblem Build(IReadOnlyList<RunResult> runs, ModelExpression model, CompareOptions options, double[]? startFull)
    {
        var pCount = model.Parameters.Count;
        var start = new double[pCount + 2];
        var free = new bool[pCount + 2];
        for (var i = 0; i < pCount; i++)
        {
            var name = model.Parameters[i];
            free[i] = !options.Fixed.ContainsKey(name);
            start[i] = options.Fixed.TryGetValue(name, out var v) ? v : options.Start.TryGetValue(name, out var s) ? s : 1.0;
        }

        start[pCount] = options.FixedOffset ?? (model.UsesMu ? options.StartOffset : 0.0);
        start[pCount + 1] = options.FixedScale ?? (model.UsesMu ? options.StartScale : 1.0);
        free[pCount] = options.FixedOffset is null && model.UsesMu;
        free[pCount + 1] = options.FixedScale is null && model.UsesMu;
        var problem = new ComparisonProblem(model, startFull is null ? start : (double[])startFull.Clone(), free);
        var used = new List<RunResult>();
        foreach (var run in runs)
        {
            if (!run.IsTurning || run.Field is not { } f)
            {
                continue;
            }

            var index = problem.Runs.Count;
            var byBin = new int[f.Centres.Length];
            Array.Fill(byBin, -1);
            for (var j = 0; j < f.Centres.Length; j++)
            {
                var se = f.StandardError[j];
                if (double.IsFinite(f.Velocity[j]) && double.IsFinite(se) && se > 0)
                {
                    byBin[j] = problem.bins.Count;
                    problem.bins.Add((index, f.Centres[j], 0.5 * f.BinWidth, f.Velocity[j], se));
                }
            }

            used.Add(run);
            problem.Runs.Add(new RunData(run.File, run.Param, run.Direction < 0 ? -1 : 1, byBin));
        }

        problem.sources.AddRange(used);

        // Period points are numbered after all field points.
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var run = used[i];
            if (options.UsePeriods && run.Period?.Measured is { } t && t.Value > 0 && double.IsFinite(t.Value) && t.StandardError > 0 && double.IsFinite(t.StandardError))
            {
                problem.Runs[i] = problem.Runs[i] with { PeriodIndex = problem.bins.Count + problem.periods.Count };
                problem.periods.Add((i, 1.0 / t.Value, t.StandardError / (t.Value * t.Value)));
            }
        }

        return problem;
    }

    /// <summary>
    /// <paramref name="seed"/> mixed with a fingerprint of the fitted data: FNV-1a, 64 bits (Fowler, Noll &amp; Vo;
    /// offset basis 14695981039346656037, prime 1099511628211), over the bit patterns of every point's phase, value
    /// and standard error and every run's μ, folded to a seed by SplitMix64. Deterministic across processes, unlike
    /// <see cref="HashCode"/>.
    /// </summary>
    public int Fingerprint(int seed)
    {
        var h = 14695981039346656037UL;
        void Mix(double x)
        {
            var bits = (ulong)BitConverter.DoubleToInt64Bits(x);
            for (var k = 0; k < 8; k++)
            {
                h = (h ^ ((bits >> (8 * k)) & 0xFF)) * 1099511628211UL;
            }
        }

        foreach (var run in Runs)
        {
            Mix(run.MuLab);
        }

        foreach (var (run, centre, _, value, se) in bins)
        {
            Mix(run);
            Mix(centre);
            Mix(value);
            Mix(se);
        }

        foreach (var (run, nu, se) in periods)
        {
            Mix(run);
            Mix(nu);
            Mix(se);
        }

        return GaussianSource.DeriveSeed(GaussianSource.DeriveSeed(seed, (int)(h >> 32)), (int)h);
    }

    public RunResult Source(int run) => sources[run];

    /// <summary>True when the model, at the full parameters, keeps turning in the run's direction at the run's μ.</summary>
    public bool TurnsAt(double[] full, int run)
    {
        var data = Runs[run];
        var pars = full.AsSpan(0, ParameterCount);
        var muModel = full[ParameterCount] + (full[ParameterCount + 1] * data.MuLab);
        var eval = Evaluator();
        for (var g = 0; g < PeriodGrid; g++)
        {
            if (!(data.Sign * eval.Evaluate(2.0 * Math.PI * g / PeriodGrid, muModel, pars, []) > 0.0))
            {
                return false;
            }
        }

        return true;
    }

    public double[] StartVector() => [.. freeToFull.Select(i => fullStart[i])];

    public int FreeIndexOf(int full) => fullToFree[full];

    public double FieldCentre(int point) => bins[point].Centre;

    public double[] Expand(ReadOnlySpan<double> free)
    {
        var full = (double[])fullStart.Clone();
        for (var i = 0; i < freeToFull.Length; i++)
        {
            full[freeToFull[i]] = free[i];
        }

        return full;
    }

    public ModelExpression.Evaluator Evaluator()
    {
        if (cachedEvaluator is null || !ReferenceEquals(cachedOwner, model))
        {
            cachedEvaluator = model.CreateEvaluator();
            cachedOwner = model;
        }

        return cachedEvaluator;
    }

    /// <summary>Residuals and Jacobian (free columns) at the free parameters; false when any value is not finite.</summary>
    public bool Evaluate(double[] free, out double[] residuals, out double[,] jacobian)
    {
        var full = Expand(free);
        var pCount = ParameterCount;
        var pars = full.AsSpan(0, pCount);
        var c0 = full[pCount];
        var c1 = full[pCount + 1];
        var eval = Evaluator();
        var grad = new double[pCount + 1];
        var acc = new double[pCount + 1];
        residuals = new double[Points];
        jacobian = new double[Points, FreeCount];
        for (var i = 0; i < bins.Count; i++)
        {
            var (run, centre, half, value, se) = bins[i];
            var data = Runs[run];
            var s = data.Sign;
            var muModel = c0 + (c1 * data.MuLab);
            var mean = 0.0;
            Array.Clear(acc);
            for (var g = 0; g < GaussNodes.Length; g++)
            {
                var f = s * eval.Evaluate(s * (centre + (half * GaussNodes[g])), muModel, pars, grad);
                mean += GaussWeights[g] * f;
                for (var u = 0; u <= pCount; u++)
                {
                    acc[u] += GaussWeights[g] * s * grad[u];
                }
            }

            residuals[i] = (mean - value) / se;
            if (!double.IsFinite(residuals[i]))
            {
                return false;
            }

            FillRow(jacobian, i, acc, data.MuLab, se);
        }

        var h = 2.0 * Math.PI / PeriodGrid;
        for (var p = 0; p < periods.Count; p++)
        {
            var (run, nu, se) = periods[p];
            var data = Runs[run];
            var s = data.Sign;
            var muModel = c0 + (c1 * data.MuLab);
            var period = 0.0;
            Array.Clear(acc);
            var turns = true;
            for (var g = 0; g < PeriodGrid; g++)
            {
                var f = s * eval.Evaluate(s * (g + 0.5) * h, muModel, pars, grad);
                if (!double.IsFinite(f))
                {
                    return false;
                }

                if (f <= 0.0)
                {
                    turns = false;
                    break;
                }

                period += h / f;
                for (var u = 0; u <= pCount; u++)
                {
                    acc[u] -= h * s * grad[u] / (f * f);
                }
            }

            var row = bins.Count + p;
            if (!turns)
            {
                // The model does not turn here: frequency 0, locally flat.
                residuals[row] = -nu / se;
                continue;
            }

            var modelNu = 1.0 / period;
            residuals[row] = (modelNu - nu) / se;
            for (var u = 0; u <= pCount; u++)
            {
                acc[u] *= -modelNu * modelNu;
            }

            FillRow(jacobian, row, acc, data.MuLab, se);
        }

        return true;
    }

    private void FillRow(double[,] jacobian, int row, double[] d, double muLab, double se)
    {
        var pCount = ParameterCount;
        for (var u = 0; u < pCount; u++)
        {
            if (fullToFree[u] >= 0)
            {
                jacobian[row, fullToFree[u]] = d[u] / se;
            }
        }

        if (fullToFree[pCount] >= 0)
        {
            jacobian[row, fullToFree[pCount]] = d[pCount] / se;
        }

        if (fullToFree[pCount + 1] >= 0)
        {
            jacobian[row, fullToFree[pCount + 1]] = d[pCount] * muLab / se;
        }
    }
}

/// <summary>One run as the problem sees it: its μ, orientation (+1, or −1 when its phase was negated), the point of each field bin (−1: none) and its period point (−1: none).</summary>
internal sealed record RunData(string File, double MuLab, int Sign, int[] FieldIndexByBin)
{
    public int PeriodIndex { get; init; } = -1;
}
