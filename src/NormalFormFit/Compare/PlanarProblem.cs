using NormalFormFit.Analysis;

namespace NormalFormFit.Compare;

/// <summary>One run as a planar comparison sees it: μ_lab, whether it fired, its frequency 1/T and SE, duration and sampling interval.</summary>
internal sealed record PlanarRun(RunResult Source, double MuLab, bool Fires, double Frequency, double FrequencySe, double Duration, double SamplingInterval);

/// <summary>
/// The fit of a planar system to runs recorded as one signal: residuals r = (ν_model − ν)/SE_ν of the firing runs'
/// frequencies ν = 1/T (SE_ν = SE_T/T²), where ν_model is the frequency of the system's limit cycle at
/// μ_model = c₀ + c₁·μ_lab (<see cref="PlanarCycle"/>; 0 where it does not fire). Jacobian by forward differences
/// (steps 10⁻⁵·max(|q|, 0.1)). Parameter vector: the system's parameters, then c₀, c₁; the free ones are fitted.
/// </summary>
internal sealed class PlanarProblem
{
    private readonly double[] fullStart;
    private readonly int[] freeToFull;
    private readonly int[] fullToFree;

    public PlanarProblem(PlanarModel model, IReadOnlyList<PlanarRun> runs, double[] fullStart, bool[] free, double x0, double x1)
    {
        Model = model;
        Runs = runs;
        this.fullStart = fullStart;
        freeToFull = [.. Enumerable.Range(0, free.Length).Where(i => free[i])];
        fullToFree = Enumerable.Repeat(-1, free.Length).ToArray();
        for (var i = 0; i < freeToFull.Length; i++)
        {
            fullToFree[freeToFull[i]] = i;
        }

        Firing = [.. runs.Where(r => r.Fires)];
        Start0 = x0;
        Start1 = x1;
        TimeCap = 10.0 * runs.Max(r => r.Duration);
    }

    public PlanarModel Model { get; }

    public IReadOnlyList<PlanarRun> Runs { get; }

    public IReadOnlyList<PlanarRun> Firing { get; }

    public double Start0 { get; }

    public double Start1 { get; }

    /// <summary>Model time allowed to reach a cycle: ten times the longest run.</summary>
    public double TimeCap { get; }

    public int ParameterCount => Model.Parameters.Count;

    public int FreeCount => freeToFull.Length;

    public int Points => Firing.Count;

    public double[] StartVector() => [.. freeToFull.Select(i => fullStart[i])];

    public int FreeIndexOf(int full) => fullToFree[full];

    public double[] Expand(ReadOnlySpan<double> free)
    {
        var full = (double[])fullStart.Clone();
        for (var i = 0; i < freeToFull.Length; i++)
        {
            full[freeToFull[i]] = free[i];
        }

        return full;
    }

    /// <summary>μ_model of a lab value at the full parameters.</summary>
    public double MuModel(double[] full, double muLab) => full[ParameterCount] + (full[ParameterCount + 1] * muLab);

    /// <summary>
    /// The noise-free behaviour at the full parameters and a lab μ. The integration starts at the given initial state,
    /// or, when the last integration at this μ_lab settled on a cycle, where that one ended (on or near the cycle, so
    /// that the small parameter steps of a fit do not repeat the transient). Not thread-safe: one problem per thread.
    /// </summary>
    public CycleOutcome Cycle(double[] full, double muLab)
    {
        var field = Model.CreateField(full[..ParameterCount], MuModel(full, muLab));
        var (x0, x1) = warm.TryGetValue(muLab, out var w) ? w : (Start0, Start1);
        var outcome = PlanarCycle.Solve(field, Model.Observed, x0, x1, TimeCap);
        if (outcome.Fires)
        {
            warm[muLab] = (outcome.X0, outcome.X1);
        }
        else if (warm.Remove(muLab))
        {
            // A cycle lost from a warm start is checked from the initial state, as every silent verdict is.
            outcome = PlanarCycle.Solve(field, Model.Observed, Start0, Start1, TimeCap);
            if (outcome.Fires)
            {
                warm[muLab] = (outcome.X0, outcome.X1);
            }
        }

        return outcome;
    }

    private readonly Dictionary<double, (double, double)> warm = [];

    /// <summary>Residuals of the firing runs at the full parameters; false when an integration broke down.</summary>
    public bool Residuals(double[] full, double[] r)
    {
        for (var i = 0; i < Firing.Count; i++)
        {
            var run = Firing[i];
            var c = Cycle(full, run.MuLab);
            if (c.Failed)
            {
                return false;
            }

            r[i] = (c.Frequency - run.Frequency) / run.FrequencySe;
        }

        return true;
    }

    /// <summary>Residuals and central-difference Jacobian at the free parameters (for <see cref="Numerics.LevenbergMarquardt"/>).</summary>
    public bool Evaluate(double[] free, out double[] residuals, out double[,] jacobian)
    {
        residuals = new double[Points];
        jacobian = new double[Points, FreeCount];
        if (!Residuals(Expand(free), residuals))
        {
            return false;
        }

        var plus = new double[Points];
        for (var u = 0; u < FreeCount; u++)
        {
            var step = 1e-5 * Math.Max(Math.Abs(free[u]), 0.1);
            var q = (double[])free.Clone();
            q[u] = free[u] + step;
            if (!Residuals(Expand(q), plus))
            {
                return false;
            }

            for (var i = 0; i < Points; i++)
            {
                jacobian[i, u] = (plus[i] - residuals[i]) / step;
            }
        }

        return true;
    }
}
