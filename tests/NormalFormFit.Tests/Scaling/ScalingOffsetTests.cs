using System.Text.Json;
using NormalFormFit.Scaling;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Scaling;

/// <summary>
/// The scaling law with an additive offset, T = C·d^(−β) + T₀ (+ s·d): against SciPy, on periods with a large constant
/// excursion time (where the log-T form biases β low), calibration of β's interval, and logarithmic periods.
/// </summary>
public class ScalingOffsetTests(ITestOutputHelper output)
{
    private static readonly double[] Distances = [0.01, 0.02, 0.04, 0.07, 0.1, 0.15, 0.2, 0.3];

    private static JsonElement Reference()
    {
        var path = Path.Combine(AppContext.BaseDirectory, "Reference", "scaling_offset_reference.json");
        return JsonDocument.Parse(File.ReadAllText(path)).RootElement;
    }

    private static double[] Array(JsonElement e, string name) => [.. e.GetProperty(name).EnumerateArray().Select(x => x.GetDouble())];

    private static PeriodPoint[] ReferencePoints(JsonElement r)
    {
        var mu = Array(r, "mu");
        var period = Array(r, "period");
        var se = Array(r, "se");
        return [.. mu.Select((m, i) => new PeriodPoint(m, period[i], se[i]))];
    }

    [Theory]
    [InlineData("offset", 0)]
    [InlineData("offset_linear", 1)]
    public void OffsetForm_MatchesScipyLeastSquares(string key, int corrections)
    {
        // Reference: Reference/make_scaling_offset_reference.py — SciPy 1.10.1 scipy.optimize.least_squares
        // (method="trf", xtol = ftol = gtol = 1e-15, x_scale="jac") on (C, T₀[, s], β, μc) together, checked there against
        // scipy.optimize.curve_fit(law, mu, T, sigma=se, absolute_sigma=False); errors sqrt(diag(inv(JᵀJ)·χ²/(n − p))).
        // Our side profiles μc and β by nested grid + Brent and solves (C, T₀, s) by QR. Tolerances: 1e-6 relative for the
        // estimates leaves room for the optimisers' stopping rules (Brent to 1e-9 in log β, 1e-10 in log distance);
        // 1e-4 relative for the errors, because SciPy's Jacobian is a finite difference ("2-point") and ours analytic.
        var r = Reference();
        var e = r.GetProperty(key);
        var fit = ScalingFit.Candidates(ReferencePoints(r)).Single(c => c.Form == ScalingForm.PowerLawWithOffset && c.Corrections == corrections);
        output.WriteLine($"β {fit.Beta:R} ± {fit.BetaSe:R}; μc {fit.MuC:R} ± {fit.MuCSe:R}; coefficients {string.Join(", ", fit.Coefficients)}");

        Assert.Equal(e.GetProperty("beta").GetDouble(), fit.Beta, 1e-6 * fit.Beta);
        Assert.Equal(e.GetProperty("onset").GetDouble(), fit.MuC, 1e-8);
        Assert.Equal(e.GetProperty("beta_se").GetDouble(), fit.BetaSe, 1e-4 * fit.BetaSe);
        Assert.Equal(e.GetProperty("onset_se").GetDouble(), fit.MuCSe, 1e-4 * fit.MuCSe);
        var c = Array(e, "coefficients");
        Assert.Equal(c[0], fit.Coefficients[0], 1e-6 * c[0]); // C
        Assert.Equal(c[1], fit.Coefficients[2], 1e-6 * c[1]); // T₀
    }

    [Fact]
    public void AiccOfAllForms_DiffersAsTheFullLikelihoodOfThePeriodsInScipy()
    {
        // Reference: the same script computes −2 ln L of the measured T in full for every form (the log-T forms as the
        // density of log T times the Jacobian 1/T), then AICc (Hurvich & Tsai 1989). Our AICc drops the constant
        // n + Σ ln(2π se²), which must be the same for all forms: so the differences must agree. Tolerance 1e-5 absolute:
        // χ² at the two optimisers' minima agrees to about 1e-9 relative; the log κ₂ form's AICc is carried along too.
        var r = Reference();
        var all = ScalingFit.Candidates(ReferencePoints(r));
        string[] keys = ["log0", "log1", "log2", "offset", "offset_linear"];
        var ours = keys.Select(k => all.Single(c => k.StartsWith("log", StringComparison.Ordinal)
            ? c.Form == ScalingForm.PowerLaw && c.Corrections == k[3] - '0'
            : c.Form == ScalingForm.PowerLawWithOffset && c.Corrections == (k == "offset" ? 0 : 1)).Aicc).ToArray();
        var theirs = keys.Select(k => r.GetProperty(k).GetProperty("aicc_full").GetDouble()).ToArray();
        for (var i = 0; i < keys.Length; i++)
        {
            output.WriteLine($"{keys[i]}: AICc {ours[i]:F6} (SciPy full {theirs[i]:F6}, difference {theirs[i] - ours[i]:F6})");
        }

        for (var i = 1; i < keys.Length; i++)
        {
            Assert.Equal(theirs[i] - theirs[0], ours[i] - ours[0], 1e-5);
        }

        // And the best form is the offset form, whose β interval covers ½ while the best log-T form's excludes it.
        var best = ScalingFit.Fit(ReferencePoints(r))!;
        Assert.Equal(ScalingForm.PowerLawWithOffset, best.Form);
        Assert.True(best.Ci95.Contains(0.5), $"β = {best.Exponent.Value} [{best.Ci95.Low}, {best.Ci95.High}]");
    }

    [Theory]
    [InlineData(+1)]
    [InlineData(-1)]
    public void LargeConstantExcursionTime_ExponentIntervalCoversOneHalf_WhereTheLogFormIsBiasedLow(int side)
    {
        // T = C d^(−½) + T₀ with T₀ three times the bottleneck passage at the farthest run (C = 1, T₀ = 3/√0.3 ≈ 5.5),
        // errors 0.1% of T with a fixed seed (invented levels). Law: Strogatz, Nonlinear Dynamics and Chaos, 2nd ed., §4.3.
        const double muc = 2.0, c = 1.0;
        var t0 = 3 / Math.Sqrt(0.3);
        var noise = GaussianSource.Create(4242, stream: side > 0 ? 1 : 2);
        PeriodPoint[] pts = [.. Distances.Select(d =>
        {
            var t = (c / Math.Sqrt(d)) + t0;
            var sigma = 0.001 * t;
            return new PeriodPoint(muc + (side * d), t + (sigma * noise.Next()), sigma);
        })];

        var fit = ScalingFit.Fit(pts)!;
        var logBest = ScalingFit.Candidates(pts).Where(k => k.Form == ScalingForm.PowerLaw).MinBy(k => k.Aicc);
        output.WriteLine($"chosen {fit.Form}: β = {fit.Exponent.Value:F4} [{fit.Ci95.Low:F4}, {fit.Ci95.High:F4}], T₀ = {fit.Offset}; best log-T form: β = {logBest.Beta:F4} ± {logBest.BetaSe:F4}");

        Assert.Equal(ScalingForm.PowerLawWithOffset, fit.Form);
        Assert.True(fit.Ci95.Contains(0.5));
        Assert.True(fit.Ci95.Width < ScalingFit.InformativeWidth);
        Assert.Equal(t0, fit.Offset!.Value.Value, 4 * fit.Offset.Value.StandardError);

        // The bias this form removes: the log-T form alone puts β well below the ½ ± 0.05 band.
        Assert.True(logBest.Beta < 0.5 - ScalingFit.EquivalenceMargin, $"log-T β = {logBest.Beta}");
    }

    /// <summary>
    /// Seeded Monte-Carlo calibration of β's 95% interval on synthetic periods T = C d^(−½) + T₀ + σε, ε Gaussian, T₀
    /// comparable to the power term at the farthest run, σ a fixed fraction of T (invented levels). R = 200 repeats: a
    /// calibrated interval covers ½ in [181, 197] repeats with probability 0.99 (scipy.stats.binom.ppf(0.005 and 0.995,
    /// 200, 0.95), SciPy 1.10.1, in Reference/make_scaling_offset_reference.py). Checked twice: the interval as reported
    /// (after the AICc choice of form) at 0.1% errors, and the offset form's own interval at 0.1% and 0.3%.
    /// </summary>
    [Theory]
    [InlineData(0.001, true)]
    [InlineData(0.001, false)]
    [InlineData(0.003, false)]
    public void ExponentInterval_OverSeededRepeats_CoversOneHalfWithinTheBinomialBand(double level, bool asReported)
    {
        var (covered, offsetChosen, z) = Coverage(level, asReported);
        var mean = z.Average();
        output.WriteLine($"{(asReported ? "as reported" : "offset form")}, errors {level:P1}: coverage {covered}/{z.Count}; offset form chosen {offsetChosen}; mean z {mean:F2}, sd z {Math.Sqrt(z.Sum(x => (x - mean) * (x - mean)) / (z.Count - 1)):F2}");
        var cal = Reference().GetProperty("calibration");
        Assert.Equal(cal.GetProperty("repeats").GetInt32(), z.Count);
        Assert.InRange(covered, cal.GetProperty("low").GetInt32(), cal.GetProperty("high").GetInt32());
        output.WriteLine(CalibrationChecks.AssertBalancedAndNotTooWide(z));
    }

    /// <summary>
    /// Known gap, narrowed: with 0.3% errors and eight runs the log-T form with κ₁ and the offset form (both four
    /// parameters) are often within 2 of each other in AICc; when κ₁ wins, its β (≈ 0.36) is biased and its interval
    /// narrow. Conditional on the chosen form the interval covered ½ in 150/200 repeats (149 before the bent-rate form T = C·(d + κd²)^(−β) joined the forms). Averaging β over the forms with
    /// Akaike weights and the unconditional error (Burnham &amp; Anderson 2002, §4.2–4.3, eq. 4.9) carries the choice into
    /// the interval: measured 167/200 on the same seeds (168 before the bent-rate form) — better, still below the band's lower end (181), because
    /// where the biased form carries nearly all the weight no average can recover ½ (an open gap, docs/methods.md §7).
    /// </summary>
    /// <remarks>
    /// Asserted as measured: the averaged interval covers at least 15 more repeats than the conditional one on the same
    /// seeds (measured 167 against 150), and stays below the band while the gap is open. When it reaches the band, this test is to become the
    /// calibration check ([181, 197]).
    /// </remarks>
    [Fact]
    public void ExponentIntervalAveragedOverForms_WithLargerErrors_CoversMoreThanTheChosenForm_ButStillUnderCovers()
    {
        var (averaged, _, z) = Coverage(0.003, asReported: true);
        var (conditional, _, _) = Coverage(0.003, asReported: true, average: false);
        var cal = Reference().GetProperty("calibration");
        output.WriteLine($"errors 0.3%: averaged coverage {averaged}/{z.Count}, chosen form alone {conditional}/{z.Count} (band from {cal.GetProperty("low").GetInt32()})");
        Assert.InRange(averaged, conditional + 15, cal.GetProperty("low").GetInt32() - 1);
    }

    private static (int Covered, int OffsetChosen, List<double> Z) Coverage(double level, bool asReported, bool average = true)
    {
        const int repeats = 200; // the R of the binomial band in the reference file
        const double muc = 1.0, c = 0.8;
        var t0 = c / Math.Sqrt(0.3);
        var covered = 0;
        var offsetChosen = 0;
        var z = new List<double>();
        for (var r = 0; r < repeats; r++)
        {
            var noise = GaussianSource.Create(9100 + r, stream: 1);
            PeriodPoint[] pts = [.. Distances.Select(d =>
            {
                var t = (c / Math.Sqrt(d)) + t0;
                var sigma = level * t;
                return new PeriodPoint(muc + d, t + (sigma * noise.Next()), sigma);
            })];
            double beta, se;
            Interval ci;
            if (asReported)
            {
                var fit = ScalingFit.Fit(pts, average)!;
                offsetChosen += fit.Form == ScalingForm.PowerLawWithOffset ? 1 : 0;
                (beta, se, ci) = (fit.Exponent.Value, fit.Exponent.StandardError, fit.Ci95);
            }
            else
            {
                // The interval Fit reports for this form: β ± t·se, t the 97.5% Student-t quantile on n − p degrees of freedom.
                var off = ScalingFit.Candidates(pts).SingleOrDefault(k => k.Form == ScalingForm.PowerLawWithOffset && k.Corrections == 0);
                if (off.Parameters == 0)
                {
                    continue;
                }

                var q = MathNet.Numerics.Distributions.StudentT.InvCDF(0, 1, off.Dof, 0.975);
                (beta, se, ci) = (off.Beta, off.BetaSe, new Interval(off.Beta - (q * off.BetaSe), off.Beta + (q * off.BetaSe)));
            }

            covered += ci.Contains(0.5) ? 1 : 0;
            z.Add((beta - 0.5) / se);
        }

        return (covered, offsetChosen, z);
    }

    [Fact]
    public void LogarithmicPeriods_OffsetFormRunsToTheLowestExponentAndIsDropped_VerdictStaysHomoclinic()
    {
        // T = −(1/λ) ln d + c (Gaspard 1990; Strogatz §8.4), λ = 0.86, c = 2, as in UndeterminedVerdictTests, 1% errors.
        // d^(−β) = 1 − β ln d + …: the offset form approaches the logarithm only as β → 0 with C → ∞, so its profile
        // minimum sits on the lowest exponent searched and the form is no candidate; β comes from the log-T form.
        PeriodPoint[] pts = [.. Distances.Select(d => new PeriodPoint(1 + d, (-Math.Log(d) / 0.86) + 2, 0.01 * ((-Math.Log(d) / 0.86) + 2)))];
        var all = ScalingFit.Candidates(pts);
        foreach (var k in all)
        {
            output.WriteLine($"{k.Form} +{k.Corrections}: β = {k.Beta:F4} ± {k.BetaSe:F4}, AICc {k.Aicc:F2}");
        }

        Assert.DoesNotContain(all, k => k.Form == ScalingForm.PowerLawWithOffset);
        var fit = ScalingFit.Fit(pts)!;
        var speed = new MinimumSpeedTrend(true, 1.0, new Interval(0.99, 1.01), pts.Length, pts.Length);
        var verdict = OnsetKindDecision.Decide(fit, PeriodLaws.Weigh(pts), speed);
        output.WriteLine(verdict.Evidence);
        Assert.Equal(OnsetKind.Homoclinic, verdict.Kind);
    }
}
