using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;

namespace NormalFormFit.Scaling;

/// <summary>One run for the scaling law: parameter and measured period with its standard error.</summary>
/// <param name="Mu">Control parameter.</param>
/// <param name="Period">Mean period.</param>
/// <param name="StandardError">Standard error of the mean period.</param>
public readonly record struct PeriodPoint(double Mu, double Period, double StandardError);

/// <summary>The forms of the scaling law.</summary>
public enum ScalingForm
{
    /// <summary>T = C·d^(−β)·exp(κ₁d + κ₂d²), fitted on log T.</summary>
    PowerLaw,

    /// <summary>T = C·d^(−β) + T₀ (+ s·d), fitted on T.</summary>
    PowerLawWithOffset,

    /// <summary>T = C·(d + κd²)^(−β), fitted on log T: the power law of a rate that bends to first order.</summary>
    PowerLawOfQuadraticRate,
}

/// <summary>
/// The fitted scaling law, T = C·d^(−β)·exp(κ₁d + κ₂d²) or T = C·d^(−β) + T₀ (+ s·d) with d = |μ − μc|. The kind of
/// onset is decided from it and the other evidence by <see cref="OnsetKindDecision"/>.
/// </summary>
/// <param name="Exponent">β with its standard error.</param>
/// <param name="Ci95">95% interval of β (Student-t, n − p degrees of freedom).</param>
/// <param name="Onset">μc of this fit with its standard error.</param>
/// <param name="Correction">κ₁ (0 when the first-order correction was not kept or the form has an offset).</param>
/// <param name="Runs">Runs used.</param>
public sealed record ScalingResult(Estimate Exponent, Interval Ci95, Estimate Onset, double Correction, int Runs)
{
    /// <summary>True when the 95% interval of β reaches ½ within <see cref="ScalingFit.EquivalenceMargin"/>.</summary>
    /// <remarks>
    /// The margin absorbs the higher-order terms of the law that a few runs cannot resolve (common practice, no source).
    /// </remarks>
    public bool AdmitsOneHalf => Ci95.Low <= 0.5 + ScalingFit.EquivalenceMargin && Ci95.High >= 0.5 - ScalingFit.EquivalenceMargin;

    /// <summary>True when the 95% interval of β is finite and no wider than <see cref="ScalingFit.InformativeWidth"/>.</summary>
    public bool IsInformative => double.IsFinite(Ci95.Width) && Ci95.Width <= ScalingFit.InformativeWidth;

    /// <summary>True when the exponent alone supports the square-root law: informative and admitting ½.</summary>
    public bool SupportsOneHalf => IsInformative && AdmitsOneHalf;

    /// <summary>
    /// The fitted curve: log T = c₀ − β·log d + Σₖ κₖdᵏ with d = |μ − μc| as coefficients [c₀, β, κ₁, …]
    /// (empty when not recorded).
    /// </summary>
    public IReadOnlyList<double> LogModel { get; init; } = [];

    /// <summary>Which form was chosen by AICc.</summary>
    public ScalingForm Form { get; init; } = ScalingForm.PowerLaw;

    /// <summary>T₀ of the form with an offset, with its standard error (null for the log-T form).</summary>
    public Estimate? Offset { get; init; }

    /// <summary>The form with an offset, T = C·d^(−β) + T₀ (+ s·d), as [C, β, T₀(, s)] (empty for the log-T form).</summary>
    public IReadOnlyList<double> OffsetModel { get; init; } = [];

    /// <summary>The form T = C·(d + κd²)^(−β) as [log C, β, κ] (empty for the other forms).</summary>
    public IReadOnlyList<double> QuadraticRateModel { get; init; } = [];

    /// <summary>True when a fitted curve is recorded (<see cref="PeriodAt"/> gives numbers).</summary>
    public bool HasCurve => LogModel.Count >= 2 || OffsetModel.Count >= 3 || QuadraticRateModel.Count == 3;

    /// <summary>The fitted period at <paramref name="mu"/> (NaN on the wrong side of μc or without a model).</summary>
    public double PeriodAt(double mu)
    {
        var d = Math.Abs(mu - Onset.Value);
        if (QuadraticRateModel.Count == 3)
        {
            var rate = d + (QuadraticRateModel[2] * d * d);
            return d > 0 && rate > 0 ? Math.Exp(QuadraticRateModel[0] - (QuadraticRateModel[1] * Math.Log(rate))) : double.NaN;
        }

        if (OffsetModel.Count >= 3)
        {
            var t = (OffsetModel[0] * Math.Pow(d, -OffsetModel[1])) + OffsetModel[2] + (OffsetModel.Count > 3 ? OffsetModel[3] * d : 0);
            return d > 0 ? t : double.NaN;
        }

        if (LogModel.Count < 2)
        {
            return double.NaN;
        }

        var y = LogModel[0] - (LogModel[1] * Math.Log(d));
        for (var k = 2; k < LogModel.Count; k++)
        {
            y += LogModel[k] * Math.Pow(d, k - 1);
        }

        return d > 0 ? Math.Exp(y) : double.NaN;
    }
}

/// <summary>
/// Fits the period scaling T = C(μ−μc)^(−β), either with up to two correction terms exp(κ₁d + κ₂d²) on log T, or
/// with an additive offset T₀ (+ s·d) on T; AICc chooses.
/// </summary>
/// <remarks>
/// <para>A saddle-node on the circle gives β = ½ (T ≈ π/√(ab) with a ∝ μ − μc; Strogatz, Nonlinear Dynamics and
/// Chaos, 2nd ed., §4.3). Log-T form: weighted least squares of log T with σ = se(T)/T; μc profiled (grid, then Brent),
/// c, β, κ linear given μc; 0–2 κ terms, keeping two residual degrees of freedom. Offset form:
/// <see cref="OffsetPowerLawFit"/> (μc and β profiled, C &gt; 0); a constant excursion time T₀ puts a d^β term into
/// log T that the κ terms cannot follow, and biases β low there.</para>
/// <para>One likelihood for all forms: each is a Gaussian density of the measured periods with errors s·se(T)
/// (s a common scale, estimated). The log-T form is a density of log T; its density of T carries the Jacobian
/// 1/Tᵢ, and with σᵢ = se(Tᵢ)/Tᵢ at the measured Tᵢ that factor cancels the change of scale exactly:
/// ln σᵢ + ln Tᵢ = ln se(Tᵢ). So −2 ln L = n ln(χ²/n) + n + Σ ln(2π se(Tᵢ)²) in both, and
/// AICc = n ln(χ²/n) + 2k + 2k(k + 1)/(n − k − 1), k = parameters + 1 (Hurvich &amp; Tsai 1989), compares them.</para>
/// <para>Covariance from the Jacobian of all parameters, scaled by the reduced χ² (Birge ratio); the interval of β
/// uses Student-t with n − p degrees of freedom. Minimum: four runs (five with κ₁, six with the offset).</para>
/// </remarks>
public static class ScalingFit
{
    /// <summary>Half-width of the band around β = ½ within which an exponent counts as the square-root law.</summary>
    public const double EquivalenceMargin = 0.05;

    /// <summary>
    /// Widest 95% interval of β that can support a verdict: a wider one spans the exponents of more than one law (½ of
    /// the saddle-node, near 0 for the logarithmic and finite laws, 1 and more) (common practice, no source).
    /// </summary>
    public const double InformativeWidth = 1.0;

    /// <summary>Fits the scaling law; null when fewer than four usable runs.</summary>
    /// <param name="runs">The runs' periods.</param>
    /// <param name="average">True (default): β averaged over all forms with Akaike weights and the unconditional error
    /// of Burnham &amp; Anderson (2002, eq. 4.9; <see cref="Onset.ModelAverage"/>), so that the interval carries the
    /// choice of form; false: the form AICc prefers, conditional on it.</param>
    public static ScalingResult? Fit(IReadOnlyList<PeriodPoint> runs, bool average = true)
    {
        var candidates = Candidates(runs);
        if (candidates.Count == 0)
        {
            return null;
        }

        var scores = Scores(candidates);
        var f = candidates[Enumerable.Range(0, candidates.Count).MinBy(i => scores[i])];
        var n = f.Dof + f.Parameters;
        var q = f.Dof > 0 ? StudentT.InvCDF(0, 1, f.Dof, 0.975) : double.PositiveInfinity;
        var beta = new Estimate(f.Beta, f.BetaSe);
        var ci = new Interval(f.Beta - (q * f.BetaSe), f.Beta + (q * f.BetaSe));
        if (average && Averaged(candidates) is { } avg)
        {
            // The exponent over all forms, weighted by AICc (Burnham & Anderson 2002, §4.2–4.3); the curve shown stays
            // the best form's.
            f = candidates[avg.Best];
            beta = new Estimate(avg.Value, avg.StandardError);
            ci = avg.Ci95;
        }

        if (f.Form == ScalingForm.PowerLawOfQuadraticRate)
        {
            return new ScalingResult(beta, ci, new Estimate(f.MuC, f.MuCSe), 0, n) { Form = f.Form, QuadraticRateModel = f.Coefficients };
        }

        return f.Form == ScalingForm.PowerLawWithOffset
            ? new ScalingResult(beta, ci, new Estimate(f.MuC, f.MuCSe), 0, n)
            {
                Form = f.Form,
                Offset = f.Offset,
                OffsetModel = f.Coefficients,
            }
            : new ScalingResult(beta, ci, new Estimate(f.MuC, f.MuCSe), f.Kappa, n) { LogModel = f.Coefficients };
    }

    /// <summary>β averaged over the forms (null when the average is not defined).</summary>
    internal static Onset.AveragedEstimate? Averaged(IReadOnlyList<Solution> candidates)
    {
        var scores = Scores(candidates);
        return Onset.ModelAverage.Average([.. candidates.Select((c, i) =>
        {
            var q = c.Dof > 0 ? StudentT.InvCDF(0, 1, c.Dof, 0.975) : double.NaN;
            return new Onset.ModelCandidate($"{c.Form} +{c.Corrections}", c.Beta, c.Dof > 0 && double.IsFinite(c.BetaSe) ? scores[i] : double.PositiveInfinity, new Interval(c.Beta - (q * c.BetaSe), c.Beta + (q * c.BetaSe)), q, c.BetaSe);
        })]);
    }

    /// <summary>
    /// A form misses its runs far beyond their errors when χ²/dof exceeds <see cref="Onset.PeriodRoute.MisfitFactor"/>
    /// times the 0.999 quantile of χ²_dof/dof (MathNet's ChiSquared.InvCDF): the χ² goodness-of-fit test with the runs'
    /// own errors, with room for errors from few revolutions understated by up to two (common practice, no source).
    /// </summary>
    internal static bool Misfits(Solution c) =>
        c.Dof >= 1 && double.IsFinite(c.ChiSquare)
        && c.ChiSquare / c.Dof > Onset.PeriodRoute.MisfitFactor * ChiSquared.InvCDF(c.Dof, 0.999) / c.Dof;

    /// <summary>
    /// The criterion that weighs the forms: AICc on the common likelihood of the periods; but when some forms fit the
    /// runs within their errors and others miss them far beyond (<see cref="Misfits"/>), the missing forms are rejected
    /// by that goodness-of-fit test (+∞) and the fitting forms are weighed among themselves, by AIC (Akaike 1974) when
    /// AICc is undefined for one of them (n = p + 2: six runs and four parameters).
    /// </summary>
    /// <remarks>
    /// Why: a truncated power law fitted to precise periods far from onset (the rotor, T = 2π/√(μ² − 1), spread over
    /// d = 0.02–0.3) misses its runs by χ²/dof ~ 10³, and AICc, which reads the misfit as scatter, would otherwise keep
    /// the only form with a defined AICc and an exponent biased by about 0.04 (five to seven standard errors) in every
    /// repeat. Forms with the same number of parameters have the same AICc correction, so among them AIC weighs as
    /// AICc would; with mixed numbers AIC penalises extra parameters less than AICc (Burnham &amp; Anderson 2002, §2.4).
    /// </remarks>
    internal static double[] Scores(IReadOnlyList<Solution> candidates)
    {
        var misfit = candidates.Select(Misfits).ToArray();
        var reject = misfit.Any(m => m) && candidates.Where((c, i) => !misfit[i] && c.Dof >= 2).Any();
        if (!reject)
        {
            return [.. candidates.Select(c => c.Aicc)];
        }

        var kept = Enumerable.Range(0, candidates.Count).Where(i => !misfit[i] && candidates[i].Dof >= 2).ToArray();
        var useAic = kept.Any(i => !double.IsFinite(candidates[i].Aicc));
        var scores = Enumerable.Repeat(double.PositiveInfinity, candidates.Count).ToArray();
        foreach (var i in kept)
        {
            var c = candidates[i];
            var n = c.Dof + c.Parameters;
            scores[i] = useAic ? Numerics.InformationCriteria.Aic(c.ChiSquare, n, c.Parameters + 1) : c.Aicc;
        }

        return scores;
    }

    /// <summary>
    /// Every form that could be fitted, with its AICc on the common likelihood of the periods: the log-T form with 0–2
    /// κ terms and the form with an offset without and with s·d. Empty when fewer than four usable runs.
    /// </summary>
    internal static IReadOnlyList<Solution> Candidates(IReadOnlyList<PeriodPoint> runs)
    {
        ArgumentNullException.ThrowIfNull(runs);
        var pts = runs.Where(r => r.Period > 0 && r.StandardError > 0 && double.IsFinite(r.StandardError)).OrderBy(r => r.Mu).ToArray();
        var found = new List<Solution>();
        if (pts.Length < 4)
        {
            return found;
        }

        // Turning side: where the period shortens.
        var side = pts[^1].Period < pts[0].Period ? 1 : -1;
        var edge = side > 0 ? pts[0].Mu : pts[^1].Mu;
        var span = pts[^1].Mu - pts[0].Mu;
        for (var k = 0; k <= 2 && (k == 0 || pts.Length - (3 + k) >= 2); k++)
        {
            if (FitWith(pts, side, edge, span, corrections: k) is { } withK)
            {
                found.Add(withK);
            }
        }

        // The power law with an additive offset, T = C·d^(−β) + T₀ (+ s·d), on the same likelihood of T.
        foreach (var linear in new[] { false, true })
        {
            if (OffsetPowerLawFit.Fit(pts, side, edge, span, linear) is { } o)
            {
                found.Add(FromOffset(o, pts.Length));
            }
        }

        // The power law of a rate that bends to first order, T = C·(d + κd²)^(−β), on log T as the κ forms.
        if (QuadraticRatePowerLawFit.Fit(pts, side, edge, span) is { } qr)
        {
            const int p = QuadraticRateSolution.Parameters;
            found.Add(new Solution(qr.MuC, qr.Beta, qr.BetaSe, qr.MuCSe, 0, pts.Length - p, Aicc(qr.ChiSquare, pts.Length, p))
            {
                Coefficients = [qr.LogC, qr.Beta, qr.Kappa],
                Form = ScalingForm.PowerLawOfQuadraticRate,
                Corrections = 1,
                Parameters = p,
                ChiSquare = qr.ChiSquare,
            });
        }

        return found;
    }

    // AICc = n ln(χ²/n) + 2k + 2k(k + 1)/(n − k − 1), k = parameters + 1 (the variance scale), Hurvich & Tsai 1989.
    // The log-T forms and the offset form give the same constant in −2 ln L of the measured periods (see the class
    // remarks), so their AICc compare directly.
    private static double Aicc(double chi2, int n, int parameters) => Numerics.InformationCriteria.Aicc(chi2, n, parameters + 1);

    private static Solution FromOffset(OffsetPowerLawSolution o, int n) =>
        new(o.MuC, o.Beta, o.BetaSe, o.MuCSe, 0, n - o.Parameters, Aicc(o.ChiSquare, n, o.Parameters))
        {
            Coefficients = [o.Coefficients[0], o.Beta, .. o.Coefficients[1..]],
            Form = ScalingForm.PowerLawWithOffset,
            Corrections = o.Parameters - 4,
            Parameters = o.Parameters,
            Offset = new Estimate(o.Coefficients[1], o.CoefficientSe[1]),
            ChiSquare = o.ChiSquare,
        };

    /// <summary>One fitted form: μc, β and their errors, residual degrees of freedom and AICc.</summary>
    internal readonly record struct Solution(double MuC, double Beta, double BetaSe, double MuCSe, double Kappa, int Dof, double Aicc)
    {
        /// <summary>Fitted parameters, μc included.</summary>
        public int Parameters { get; init; }

        /// <summary>Terms beyond [c, β] (κ₁, κ₂) or beyond [C, β, T₀] (s).</summary>
        public int Corrections { get; init; }

        public double[] Coefficients { get; init; } = [];

        public ScalingForm Form { get; init; } = ScalingForm.PowerLaw;

        public Estimate? Offset { get; init; }

        /// <summary>Weighted residual sum of squares on the form's own scale (log T or T).</summary>
        public double ChiSquare { get; init; } = double.NaN;
    }

    private static Solution? FitWith(PeriodPoint[] pts, int side, double edge, double span, int corrections)
    {
        double Chi2(double muc) => Inner(pts, side, muc, corrections, out _);

        // Grid over log of the distance of μc beyond the nearest run, then Brent.
        var min = Numerics.GridSearch.Minimize(
            logd => Chi2(edge - (side * Math.Exp(logd))), Math.Log(1e-6 * span), Math.Log(20 * span), 80, 1e-10);
        if (min.GridIndex < 0)
        {
            return null;
        }

        var muc = edge - (side * Math.Exp(min.X));
        var chi2 = Inner(pts, side, muc, corrections, out var coef);
        var p = 3 + corrections;
        var n = pts.Length;
        var dof = n - p;
        if (dof < 1)
        {
            return null;
        }

        // Jacobian of weighted residuals in (c, β, [κ], μc); μc by central differences.
        var j = Matrix<double>.Build.Dense(n, p);
        var h = 1e-6 * Math.Max(Math.Abs(edge - muc), 1e-12);
        for (var i = 0; i < n; i++)
        {
            var sigma = pts[i].StandardError / pts[i].Period;
            double Model(double mc)
            {
                var d = side * (pts[i].Mu - mc);
                var y = coef[0] - (coef[1] * Math.Log(d));
                for (var k = 1; k <= corrections; k++)
                {
                    y += coef[1 + k] * Math.Pow(d, k);
                }

                return y;
            }

            var dd = side * (pts[i].Mu - muc);
            j[i, 0] = 1 / sigma;
            j[i, 1] = -Math.Log(dd) / sigma;
            for (var k = 1; k <= corrections; k++)
            {
                j[i, 1 + k] = Math.Pow(dd, k) / sigma;
            }

            j[i, p - 1] = (Model(muc + h) - Model(muc - h)) / (2 * h) / sigma;
        }

        var red = chi2 / dof;
        var cov = (j.TransposeThisAndMultiply(j)).Inverse() * red;
        var aicc = Aicc(chi2, n, p);
        return new Solution(muc, coef[1], Math.Sqrt(cov[1, 1]), Math.Sqrt(cov[p - 1, p - 1]), corrections > 0 ? coef[2] : 0, dof, aicc) { Coefficients = coef, Corrections = corrections, Parameters = p, ChiSquare = chi2 };
    }

    // Weighted linear least squares of log T on [1, −log d, (d)] for a given μc; returns χ².
    private static double Inner(PeriodPoint[] pts, int side, double muc, int corrections, out double[] coef) =>
        Numerics.WeightedLinearFit.ChiSquare(pts.Length, 2 + corrections, (int i, double[] g, out double y, out double w) =>
        {
            var d = side * (pts[i].Mu - muc);
            g[0] = 1.0;
            g[1] = -Math.Log(d);
            for (var k = 1; k <= corrections; k++)
            {
                g[1 + k] = Math.Pow(d, k);
            }

            (y, w) = (Math.Log(pts[i].Period), pts[i].Period / pts[i].StandardError);
            return d > 0;
        }, out coef);
}
