using System.Globalization;

namespace NormalFormFit.Onset;

/// <summary>One candidate model's estimate of a quantity, for <see cref="ModelAverage"/>.</summary>
/// <param name="Name">The model in plain words (for notes).</param>
/// <param name="Value">Its estimate θᵢ.</param>
/// <param name="Aicc">Its AICc on the likelihood shared by all candidates (+∞: no candidate).</param>
/// <param name="Ci95">Its own 95% interval (conditional on the model); may be asymmetric or unbounded on a side.</param>
/// <param name="Quantile">The quantile q that turned its standard error into that interval (Student-t or normal).</param>
/// <param name="StandardError">Its own (conditional) standard error, for the symmetric unconditional one; NaN: from the
/// interval's half-widths over <paramref name="Quantile"/>.</param>
public readonly record struct ModelCandidate(string Name, double Value, double Aicc, Interval Ci95, double Quantile, double StandardError = double.NaN);

/// <summary>A model-averaged estimate.</summary>
/// <param name="Value">θ̄ = Σ wᵢθᵢ.</param>
/// <param name="StandardError">Unconditional standard error, eq. 4.9 with the candidates' own standard errors.</param>
/// <param name="Ci95">θ̄ − q·se₋ … θ̄ + q·se₊, per side.</param>
/// <param name="Weights">Akaike weights of the candidates, in the order given (0 for candidates left out).</param>
/// <param name="Best">Index of the candidate with the largest weight.</param>
public sealed record AveragedEstimate(double Value, double StandardError, Interval Ci95, IReadOnlyList<double> Weights, int Best)
{
    /// <summary>The weights as "name w, name w" for notes (candidates with weight ≥ 0.005).</summary>
    public string Describe(IReadOnlyList<ModelCandidate> candidates)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        var inv = CultureInfo.InvariantCulture;
        return string.Join(", ", candidates.Select((c, i) => (c, w: Weights[i]))
            .Where(x => x.w >= 0.005)
            .OrderByDescending(x => x.w)
            .Select(x => string.Create(inv, $"{x.c.Name} {x.w:F2}")));
    }
}

/// <summary>
/// Model averaging with Akaike weights and the unconditional standard error of Burnham &amp; Anderson (Model Selection
/// and Multimodel Inference, 2nd ed., 2002, §4.2–4.3): the choice of law becomes part of the interval.
/// </summary>
/// <remarks>
/// <para>Weights wᵢ = exp(−Δᵢ/2)/Σⱼ exp(−Δⱼ/2), Δᵢ = AICcᵢ − min AICc (B&amp;A §2.9). Estimate θ̄ = Σ wᵢθᵢ (B&amp;A
/// eq. 4.1). Unconditional standard error (B&amp;A eq. 4.9): se(θ̄) = Σ wᵢ √(var(θᵢ | gᵢ) + (θᵢ − θ̄)²): each model's
/// own variance plus the spread of the models about the average, so that laws that disagree widen the interval by
/// what they disagree, whatever their fit.</para>
/// <para>Per side: each candidate's interval may be asymmetric (profile likelihood, Fieller); its conditional standard
/// error on each side is the half-width on that side over its quantile, (θᵢ − Lᵢ)/qᵢ and (Uᵢ − θᵢ)/qᵢ, and eq. 4.9 is
/// applied to each side separately; the interval is θ̄ ∓ q·se∓ with q the quantile of the best-weighted candidate
/// (B&amp;A §4.3.2 use θ̄ ± t·se(θ̄) with the t of the models' degrees of freedom). A side unbounded in a candidate with
/// weight is unbounded in the average. Candidates with weight below <see cref="NegligibleWeight"/> are left out and the
/// others renormalised (they change θ̄ by less than 10⁻³ of their distance, but an unbounded side of one would make the
/// average unbounded; common practice, no source).</para>
/// <para>All candidates must be fitted to the same data on one likelihood (AICc differences are meaningful only then);
/// the callers document why theirs are. O(m).</para>
/// </remarks>
public static class ModelAverage
{
    /// <summary>Candidates lighter than this are left out of the average (Δ AICc above about 14 against the best).</summary>
    public const double NegligibleWeight = 1e-3;

    /// <summary>The averaged estimate; null when no candidate has a finite AICc and value.</summary>
    public static AveragedEstimate? Average(IReadOnlyList<ModelCandidate> candidates)
    {
        ArgumentNullException.ThrowIfNull(candidates);
        var usable = candidates.Select(c => double.IsFinite(c.Aicc) && double.IsFinite(c.Value) && c.Quantile > 0).ToArray();
        if (!usable.Any(u => u))
        {
            return null;
        }

        var min = candidates.Where((_, i) => usable[i]).Min(c => c.Aicc);
        var w = candidates.Select((c, i) => usable[i] ? Math.Exp(-0.5 * (c.Aicc - min)) : 0.0).ToArray();
        Normalise(w);
        for (var i = 0; i < w.Length; i++)
        {
            if (w[i] < NegligibleWeight)
            {
                w[i] = 0;
            }
        }

        Normalise(w);
        var best = Array.IndexOf(w, w.Max());
        var mean = 0.0;
        for (var i = 0; i < w.Length; i++)
        {
            mean += w[i] > 0 ? w[i] * candidates[i].Value : 0;
        }

        double Side(Func<ModelCandidate, double> halfWidth)
        {
            var s = 0.0;
            for (var i = 0; i < w.Length; i++)
            {
                if (w[i] > 0)
                {
                    var c = candidates[i];
                    var own = halfWidth(c) / c.Quantile;
                    var spread = c.Value - mean;
                    s += w[i] * Math.Sqrt((own * own) + (spread * spread));
                }
            }

            return s;
        }

        var below = Side(c => c.Value - c.Ci95.Low);
        var above = Side(c => c.Ci95.High - c.Value);
        var q = candidates[best].Quantile;
        var ci = new Interval(mean - (q * below), mean + (q * above));
        var se = Side(c => double.IsFinite(c.StandardError) ? c.StandardError * c.Quantile : 0.5 * (c.Ci95.High - c.Ci95.Low));
        return new AveragedEstimate(mean, se, ci, w, best);
    }

    private static void Normalise(double[] w)
    {
        var total = w.Sum();
        for (var i = 0; i < w.Length; i++)
        {
            w[i] /= total;
        }
    }
}
