using System.Text.RegularExpressions;
using NormalFormFit.Analysis;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Simulation;
using NormalFormFit.Tests.Analysis;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// Demo data shared by the reporting tests: the driven rotor θ̇ = μ − sin θ (onset μc = 1) at six invented
/// parameter values, analysed once per test run. The units "mA" are invented for the demo.
/// </summary>
public sealed class DemoReport
{
    public static readonly double[] Mus = [1.02, 1.04, 1.07, 1.1, 1.2, 1.3];

    private static readonly Lazy<AnalysisReport> Shared = new(() =>
        SimulatedSet.Analyze(BuiltInModels.Rotor, Mus, new SimulationOptions { Revolutions = 5, SamplingInterval = 0.01, MeasurementNoise = 0.01, Seed = 5 })
        with
        { ParamUnits = "mA" });

    private static readonly Lazy<IReadOnlyList<Figure>> SharedFigures = new(() => ReportFigures.Build(Shared.Value));

    public static AnalysisReport Report => Shared.Value;

    public static IReadOnlyList<Figure> Figures => SharedFigures.Value;
}

/// <summary>Finds what an HTML page would fetch from outside itself.</summary>
internal static partial class ExternalReferences
{
    /// <summary>
    /// Every attribute value that the HTML Living Standard (WHATWG, "fetching" attributes: src, href, srcset,
    /// poster, data, action, formaction, ping, manifest, background) or SVG 1.1 (xlink:href) would resolve, every CSS
    /// url(…) and @import, unless it points inside the page (#id) or carries its content (data:).
    /// </summary>
    public static IReadOnlyList<string> Find(string html)
    {
        var found = new List<string>();
        foreach (Match m in Attribute().Matches(html))
        {
            found.Add(m.Groups[2].Value);
        }

        foreach (Match m in CssUrl().Matches(html))
        {
            found.Add(m.Groups[1].Value);
        }

        var external = found.Where(v => !v.StartsWith('#') && !v.StartsWith("data:", StringComparison.OrdinalIgnoreCase)).ToList();
        if (html.Contains("@import", StringComparison.OrdinalIgnoreCase))
        {
            external.Add("@import");
        }

        return external;
    }

    [GeneratedRegex("\\s(src|href|xlink:href|srcset|poster|data|action|formaction|ping|manifest|background)\\s*=\\s*[\"']([^\"']*)[\"']", RegexOptions.IgnoreCase)]
    private static partial Regex Attribute();

    [GeneratedRegex("url\\(\\s*[\"']?([^\"')]+)", RegexOptions.IgnoreCase)]
    private static partial Regex CssUrl();
}
