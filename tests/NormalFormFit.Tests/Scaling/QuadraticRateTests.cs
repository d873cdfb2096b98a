using System.Text.Json;
using NormalFormFit.Scaling;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Scaling;

/// <summary>
/// The power law of a bent rate, T = C·(d + κd²)^(−β): against SciPy, on the rotor's exact period, and the rule that a
/// form missing its runs far beyond their errors gives way to forms that fit them.
/// </summary>
public class QuadraticRateTests(ITestOutputHelper output)
{
    private static JsonElement Reference()
    {
        var path = Path.Combine(AppContext.BaseDirectory, "Reference", "quadratic_rate_reference.json");
        return JsonDocument.Parse(File.ReadAllText(path)).RootElement;
    }

    private static double[] Array(JsonElement e, string name) => [.. e.GetProperty(name).EnumerateArray().Select(x => x.GetDouble())];

    [Fact]
    public void Fit_MatchesScipyLeastSquaresOnAllParameters()
    {
        // Reference: Reference/make_quadratic_rate_reference.py — SciPy 1.10.1 scipy.optimize.least_squares (method="trf",
        // xtol = ftol = gtol = 1e-15) on (log C, β, κ, μc) together, checked there against scipy.optimize.curve_fit
        // (absolute_sigma=False); errors sqrt(diag(inv(JᵀJ)·χ²/(n − p))). Tolerances: 1e-6 relative for β and κ, 1e-8 for
        // μc (the optimisers' stopping rules), 1e-3 relative for the errors (both Jacobians are finite differences).
        var r = Reference();
        var mu = Array(r, "mu");
        var period = Array(r, "period");
        var se = Array(r, "se");
        PeriodPoint[] pts = [.. mu.Select((m, i) => new PeriodPoint(m, period[i], se[i]))];
        var fit = ScalingFit.Candidates(pts).Single(c => c.Form == ScalingForm.PowerLawOfQuadraticRate);
        output.WriteLine($"β {fit.Beta:R} ± {fit.BetaSe:R}; κ {fit.Coefficients[2]:R}; μc {fit.MuC:R} ± {fit.MuCSe:R}; χ² {fit.ChiSquare:R}");

        Assert.Equal(r.GetProperty("beta").GetDouble(), fit.Beta, 1e-6);
        Assert.Equal(r.GetProperty("kappa").GetDouble(), fit.Coefficients[2], 1e-5);
        Assert.Equal(r.GetProperty("onset").GetDouble(), fit.MuC, 1e-8);
        Assert.Equal(r.GetProperty("log_c").GetDouble(), fit.Coefficients[0], 1e-6);
        Assert.Equal(r.GetProperty("chi2").GetDouble(), fit.ChiSquare, 1e-6 * fit.ChiSquare);
        Assert.Equal(r.GetProperty("beta_se").GetDouble(), fit.BetaSe, 1e-3 * fit.BetaSe);
        Assert.Equal(r.GetProperty("onset_se").GetDouble(), fit.MuCSe, 1e-3 * fit.MuCSe);
    }

    [Fact]
    public void RotorPeriods_SpreadFarFromOnset_ExponentIntervalCoversOneHalf_WhereThePurePowerLawMissesItsRuns()
    {
        // The rotor θ̇ = μ − sin θ: T = 2π/√(μ² − 1) (Adler 1946) = √2·π·(d + d²/2)^(−½). Six runs from 0.02 to 0.3 above
        // onset, errors 0.005% of T with a fixed seed (invented levels, about those of five simulated revolutions).
        double[] distances = [0.02, 0.04, 0.07, 0.1, 0.15, 0.3];
        var noise = GaussianSource.Create(7070, stream: 1);
        PeriodPoint[] pts = [.. distances.Select(d =>
        {
            var t = 2 * Math.PI / Math.Sqrt(d * (2 + d));
            var sigma = 5e-5 * t;
            return new PeriodPoint(1 + d, t + (sigma * noise.Next()), sigma);
        })];
        var all = ScalingFit.Candidates(pts);
        foreach (var k in all)
        {
            output.WriteLine($"{k.Form} +{k.Corrections}: β = {k.Beta:F5} ± {k.BetaSe:F5}, χ²/dof {k.ChiSquare / k.Dof:G3}, misfits {ScalingFit.Misfits(k)}");
        }

        var pure = all.Single(k => k.Form == ScalingForm.PowerLaw && k.Corrections == 0);
        var bent = all.Single(k => k.Form == ScalingForm.PowerLawOfQuadraticRate);
        Assert.True(ScalingFit.Misfits(pure), "the pure power law misses the rotor's runs far beyond their errors");
        Assert.False(ScalingFit.Misfits(bent));
        Assert.Equal(0.5, bent.Coefficients[2], 0.05); // κ = ½
        var fit = ScalingFit.Fit(pts)!;
        output.WriteLine($"reported: {fit.Form}, β = {fit.Exponent.Value:F5} [{fit.Ci95.Low:F5}, {fit.Ci95.High:F5}]");
        Assert.True(fit.Ci95.Contains(0.5), $"β = {fit.Exponent.Value} [{fit.Ci95.Low}, {fit.Ci95.High}]");
        Assert.False(new Interval(pure.Beta - (3.18 * pure.BetaSe), pure.Beta + (3.18 * pure.BetaSe)).Contains(0.5), "without the rule the pure power law's interval (t₃ = 3.18) would miss ½");
    }

    [Fact]
    public void PurePowerLaw_FormsThatFit_KeepTheirAicc_NoRejection()
    {
        // The theta neuron, T = π/√μ (Ermentrout & Kopell 1986): a pure power law, κ = 0. No form misses the runs, so the
        // weights stay AICc's and the pure power law (the only one with a defined AICc from six runs) is reported.
        double[] mus = [0.01, 0.02, 0.035, 0.05, 0.075, 0.15];
        var noise = GaussianSource.Create(7071, stream: 1);
        PeriodPoint[] pts = [.. mus.Select(m =>
        {
            var t = Math.PI / Math.Sqrt(m);
            var sigma = 5e-5 * t;
            return new PeriodPoint(m, t + (sigma * noise.Next()), sigma);
        })];
        var all = ScalingFit.Candidates(pts);
        Assert.DoesNotContain(all, ScalingFit.Misfits);
        Assert.Equal(all.Select(k => k.Aicc), ScalingFit.Scores(all));
        var fit = ScalingFit.Fit(pts)!;
        Assert.Equal(ScalingForm.PowerLaw, fit.Form);
        Assert.True(fit.Ci95.Contains(0.5));
        var bent = all.SingleOrDefault(k => k.Form == ScalingForm.PowerLawOfQuadraticRate);
        if (bent.Parameters > 0)
        {
            Assert.Equal(0.0, bent.Coefficients[2], 5 * 0.15); // κ = 0 within a few of its errors (κ·dmax small)
        }
    }
}
