using System.Globalization;
using MathNet.Numerics.Distributions;
using NormalFormFit.Onset;
using NormalFormFit.Scaling;

namespace NormalFormFit.Analysis;

/// <summary>Where the recommended onset comes from.</summary>
public enum RecommendationBasis
{
    /// <summary>Both routes agree: their inverse-variance weighted mean.</summary>
    Combined,

    /// <summary>The bottleneck route alone (a → 0).</summary>
    Bottleneck,

    /// <summary>The period route alone (T⁻² → 0).</summary>
    Period,

    /// <summary>No recommendation: the routes do not apply, or neither gave an estimate.</summary>
    None,
}

/// <summary>
/// The one onset a reader should act on, with its 95% interval, where it comes from and why. The two routes stay in
/// the report as its evidence.
/// </summary>
/// <param name="Value">μc (NaN when refused).</param>
/// <param name="StandardError">Its standard error (NaN when refused).</param>
/// <param name="Ci95">Its 95% interval (NaN bounds when refused; a bound may be infinite when a single route's is).</param>
/// <param name="Basis">Combined, one route, or none.</param>
/// <param name="Reason">Why this basis, in plain words.</param>
public sealed record RecommendedOnset(double Value, double StandardError, Interval Ci95, RecommendationBasis Basis, string Reason)
{
    /// <summary>True when an onset is recommended.</summary>
    public bool IsAvailable => Basis != RecommendationBasis.None && double.IsFinite(Value);

    /// <summary>
    /// Chooses the onset to recommend from the two routes:
    /// <list type="bullet">
    /// <item>the kind of onset is homoclinic or finite-period: none (both routes assume a saddle-node on the circle);</item>
    /// <item>one route only (or one with an unbounded interval): that route;</item>
    /// <item>both, agreeing (|z| ≤ 2): their inverse-variance weighted mean μ = Σwᵢμᵢ/Σwᵢ, wᵢ = 1/σᵢ², with standard
    /// error (Σwᵢ)^−½ (Cochran 1954, "The combination of estimates from different experiments", Biometrics 10:101–129),
    /// and the interval μ ± q·σ, q the weighted mean of the quantiles the routes' own intervals use (Student t on the
    /// Birge-scaled fits, else 1.96);</item>
    /// <item>both, disagreeing: the route without a law misfit when only one has it, else the period route, whose
    /// measured periods need no local model of the field.</item>
    /// </list>
    /// </summary>
    /// <param name="fromBottleneck">The bottleneck route's onset.</param>
    /// <param name="fromPeriod">The period route's onset.</param>
    /// <param name="agreement">Their agreement.</param>
    /// <param name="kind">The kind of onset found.</param>
    /// <param name="misfit">The routes whose law misses its runs by far more than their errors allow.</param>
    public static RecommendedOnset Choose(OnsetEstimate fromBottleneck, OnsetEstimate fromPeriod, OnsetAgreement agreement, OnsetKind kind, IReadOnlySet<OnsetRoute>? misfit = null)
    {
        ArgumentNullException.ThrowIfNull(fromBottleneck);
        ArgumentNullException.ThrowIfNull(fromPeriod);
        ArgumentNullException.ThrowIfNull(agreement);
        misfit ??= new HashSet<OnsetRoute>();
        var inv = CultureInfo.InvariantCulture;
        if (kind is OnsetKind.Homoclinic or OnsetKind.FinitePeriod)
        {
            return Refused($"the onset looks {(kind == OnsetKind.Homoclinic ? "homoclinic" : "finite-period")}, not a saddle-node on the circle, which both routes assume: no onset is recommended");
        }

        var a = Usable(fromBottleneck);
        var t = Usable(fromPeriod);
        if (!a && !t)
        {
            return Refused("neither route gave an onset with a bounded interval");
        }

        if (a != t)
        {
            var (use, other) = a ? (fromBottleneck, fromPeriod) : (fromPeriod, fromBottleneck);
            var why = !other.IsAvailable ? "gave no estimate" : "has an unbounded 95% interval";
            return From(use, $"only the {use.Route.Noun()} route gave a usable onset (the {other.Route.Noun()} route {why})");
        }

        if (agreement.Consistent)
        {
            var wa = 1 / (fromBottleneck.StandardError * fromBottleneck.StandardError);
            var wt = 1 / (fromPeriod.StandardError * fromPeriod.StandardError);
            var value = ((wa * fromBottleneck.Value) + (wt * fromPeriod.Value)) / (wa + wt);
            var se = 1 / Math.Sqrt(wa + wt);
            var q = ((wa * Quantile(fromBottleneck)) + (wt * Quantile(fromPeriod))) / (wa + wt);
            return new RecommendedOnset(value, se, new Interval(value - (q * se), value + (q * se)), RecommendationBasis.Combined, string.Create(inv,
                $"the two routes agree (z = {agreement.Z:F2}): their inverse-variance weighted mean (Cochran 1954)"));
        }

        if (misfit.Count == 1)
        {
            var bad = misfit.First();
            var use = bad == OnsetRoute.Bottleneck ? fromPeriod : fromBottleneck;
            return From(use, string.Create(inv,
                $"the routes disagree (z = {agreement.Z:F2}) and the {bad.Noun()} route's law misses its runs: the {use.Route.Noun()} route"));
        }

        return From(fromPeriod, string.Create(inv,
            $"the routes disagree (z = {agreement.Z:F2}): the period route, whose measured periods need no local model of the field"));
    }

    /// <summary>A route with a finite value, standard error and interval.</summary>
    private static bool Usable(OnsetEstimate e) =>
        e.IsAvailable && e.StandardError > 0 && double.IsFinite(e.StandardError) && double.IsFinite(e.Ci95.Low) && double.IsFinite(e.Ci95.High);

    /// <summary>The quantile the route's interval uses: Student t on the fit's degrees of freedom when Birge-scaled, else the normal 1.96.</summary>
    private static double Quantile(OnsetEstimate e) =>
        e.Curve is { Scaled: true, DegreesOfFreedom: > 0 } c ? StudentT.InvCDF(0, 1, c.DegreesOfFreedom, 0.975) : Normal.InvCDF(0, 1, 0.975);

    private static RecommendedOnset From(OnsetEstimate e, string reason) =>
        new(e.Value, e.StandardError, e.Ci95, e.Route == OnsetRoute.Bottleneck ? RecommendationBasis.Bottleneck : RecommendationBasis.Period, reason);

    private static RecommendedOnset Refused(string reason) =>
        new(double.NaN, double.NaN, new Interval(double.NaN, double.NaN), RecommendationBasis.None, reason);
}
