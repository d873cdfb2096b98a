using NormalFormFit.Analysis;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;
using NormalFormFit.Simulation;
using Xunit.Abstractions;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// The recommended onset: one answer from the two routes, the combination when they agree, the route to trust when they
/// do not, none when the kind of onset is not the one both routes assume.
/// </summary>
public class RecommendedOnsetTests(ITestOutputHelper output)
{
    private static OnsetEstimate Route(OnsetRoute route, double value, double se) =>
        new(route, value, se, new Interval(value - (1.959964 * se), value + (1.959964 * se)), 6, null, []);

    private static OnsetAgreement Agree(OnsetEstimate a, OnsetEstimate t)
    {
        var z = (a.Value - t.Value) / Math.Sqrt((a.StandardError * a.StandardError) + (t.StandardError * t.StandardError));
        return new OnsetAgreement(z, Math.Abs(z) <= 2, Math.Abs(z) <= 2 ? null : "test");
    }

    [Fact]
    public void AgreeingRoutes_AreCombinedByInverseVarianceWeights()
    {
        // Cochran (1954), Biometrics 10:101–129: μ = Σwᵢμᵢ/Σwᵢ, se = (Σwᵢ)^−½, wᵢ = 1/σᵢ². Worked by hand:
        // w = 100 and 25, μ = (100·1.0 + 25·1.2)/125 = 1.04, se = 1/√125 = 0.0894427191.
        var a = Route(OnsetRoute.Bottleneck, 1.0, 0.1);
        var t = Route(OnsetRoute.Period, 1.2, 0.2);
        var r = RecommendedOnset.Choose(a, t, Agree(a, t), OnsetKind.SaddleNodeOnCircle);
        Assert.Equal(RecommendationBasis.Combined, r.Basis);
        Assert.Equal(1.04, r.Value, 12);
        Assert.Equal(0.0894427191, r.StandardError, 9);

        // Neither route's curve is Birge-scaled here, so the normal quantile 1.959964 (Abramowitz & Stegun 26.2.23 table).
        Assert.Equal(1.04 - (1.959964 * 0.0894427191), r.Ci95.Low, 6);
        Assert.Equal(1.04 + (1.959964 * 0.0894427191), r.Ci95.High, 6);
        Assert.True(r.StandardError < Math.Min(a.StandardError, t.StandardError));
    }

    [Fact]
    public void DisagreeingRoutes_RecommendThePeriodRoute_UnlessItsLawMisfits()
    {
        var a = Route(OnsetRoute.Bottleneck, 1.0, 0.01);
        var t = Route(OnsetRoute.Period, 1.1, 0.01);
        var plain = RecommendedOnset.Choose(a, t, Agree(a, t), OnsetKind.SaddleNodeOnCircle);
        Assert.Equal(RecommendationBasis.Period, plain.Basis);
        Assert.Equal(1.1, plain.Value);
        Assert.Equal(t.Ci95, plain.Ci95);
        Assert.Contains("disagree", plain.Reason, StringComparison.Ordinal);

        var misfit = RecommendedOnset.Choose(a, t, Agree(a, t), OnsetKind.SaddleNodeOnCircle, new HashSet<OnsetRoute> { OnsetRoute.Period });
        Assert.Equal(RecommendationBasis.Bottleneck, misfit.Basis);
        Assert.Equal(1.0, misfit.Value);
        Assert.Contains("misses its runs", misfit.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void OneRouteOnly_IsRecommendedWithTheOtherRoutesFailureNamed()
    {
        var a = OnsetEstimate.NotAvailable(OnsetRoute.Bottleneck, 0, new Diagnostic(Severity.Info, "x", "no bottleneck"));
        var t = Route(OnsetRoute.Period, 2.5, 0.05);
        var r = RecommendedOnset.Choose(a, t, new OnsetAgreement(double.NaN, false, null), OnsetKind.Undetermined);
        Assert.Equal(RecommendationBasis.Period, r.Basis);
        Assert.Equal(2.5, r.Value);
        Assert.Contains("bottleneck route gave no estimate", r.Reason, StringComparison.Ordinal);

        // An unbounded interval (Fieller's theorem when the slope is not resolved) is not usable either.
        var wide = new OnsetEstimate(OnsetRoute.Bottleneck, 2.4, 0.3, new Interval(double.NegativeInfinity, 3), 5, null, []);
        var r2 = RecommendedOnset.Choose(wide, t, Agree(wide, t), OnsetKind.SaddleNodeOnCircle);
        Assert.Equal(RecommendationBasis.Period, r2.Basis);
        Assert.Contains("unbounded", r2.Reason, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(OnsetKind.Homoclinic)]
    [InlineData(OnsetKind.FinitePeriod)]
    public void AnOnsetThatIsNotASaddleNodeOnTheCircle_GetsNoRecommendation(OnsetKind kind)
    {
        var a = Route(OnsetRoute.Bottleneck, 1.0, 0.01);
        var t = Route(OnsetRoute.Period, 1.01, 0.01);
        var r = RecommendedOnset.Choose(a, t, Agree(a, t), kind);
        Assert.Equal(RecommendationBasis.None, r.Basis);
        Assert.False(r.IsAvailable);
        Assert.True(double.IsNaN(r.Value));
        Assert.Contains("not a saddle-node on the circle", r.Reason, StringComparison.Ordinal);
    }

    /// <summary>
    /// Seeded Monte-Carlo calibration of the recommended 95% interval (the same scenarios and seeds as
    /// <see cref="CalibrationTests"/>): it must cover the true onset in 90–98% of 200 repeats (binomial SD 1.5%), and
    /// the root-mean-square of (μ − μc)/se must lie in [0.7, 1.4], so that an interval twice too wide (RMS z ≈ 0.5),
    /// which would still pass the coverage band's lower end, fails as surely as one too narrow.
    /// </summary>
    [Theory]
    [InlineData("rotor", new[] { 1.01, 1.02, 1.04, 1.07, 1.1, 1.15, 1.2, 1.3 }, 1.0)]
    [InlineData("theta-neuron", new[] { 0.005, 0.01, 0.02, 0.04, 0.07, 0.1, 0.15, 0.2 }, 0.0)]
    public void RecommendedInterval_OverSeededRepeats_CoversTheTruthIn90To98Percent_AndIsNotTooWide(string modelName, double[] mus, double truth)
    {
        const int repeats = 200;
        Assert.True(BuiltInModels.TryGet(modelName, out var model));
        var cover = 0;
        var z = new List<double>();
        var bases = new Dictionary<RecommendationBasis, int>();
        for (var r = 0; r < repeats; r++)
        {
            var template = new SimulationOptions { Revolutions = 5, SamplingInterval = 0.02, MeasurementNoise = 0.01, Seed = 1000 + (r * 37) };
            var rec = SimulatedSet.Analyze(model, mus, template).Recommended;
            bases[rec.Basis] = bases.GetValueOrDefault(rec.Basis) + 1;
            Assert.True(rec.IsAvailable, rec.Reason);
            cover += rec.Ci95.Contains(truth) ? 1 : 0;
            z.Add((rec.Value - truth) / rec.StandardError);
        }

        var rms = Math.Sqrt(z.Average(v => v * v));
        output.WriteLine($"{modelName}: recommended coverage {cover}/{repeats}, RMS z {rms:F2}, mean z {z.Average():F2}; bases {string.Join(", ", bases.Select(kv => $"{kv.Key} {kv.Value}"))}");
        Assert.InRange(cover / (double)repeats, 0.90, 0.98);
        Assert.InRange(rms, 0.7, 1.4);
    }
}
