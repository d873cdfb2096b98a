using System.Text;
using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Reporting;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;
using NormalFormFit.Reporting.Tables;

namespace NormalFormFit.Cli;

/// <summary>
/// Writes the report folder whole or not at all through <see cref="OwnedFolder"/>: a folder is only replaced when it
/// is empty or holds an earlier report whose every file is listed, unchanged, in the marker file, so no user file is
/// ever deleted or overwritten.
/// </summary>
internal static class ReportFolder
{
    /// <summary>File that marks a folder as written by nffit (so a later run may replace it).</summary>
    public const string Marker = ".nffit-report";

    /// <summary>What the marker says wrote the folder.</summary>
    private const string Kind = "report";

    /// <summary>Checks the target before any work: null when it can be written, else the error (docs/data-safety.md, clause 2).</summary>
    public static Diagnostic? Check(string dir) =>
        OwnedFolder.Check(dir, Marker, Kind, "--out", replace: true, howToReplace: string.Empty);

    /// <summary>Renders and writes every file of the report; reports each step to <paramref name="progress"/>.</summary>
    /// <param name="dir">Target folder.</param>
    /// <param name="report">The analysis.</param>
    /// <param name="source">The manifest's name, for the page's heading.</param>
    /// <param name="progress">Step, done, total.</param>
    /// <param name="model">A model comparison of the same runs: adds its figure, a section of the page, model.json and its text.</param>
    /// <param name="steps">The file-system steps of the swap (a test injects a failing one).</param>
    public static void Write(string dir, AnalysisReport report, string source, Action<string, int, int>? progress = null, ModelComparison? model = null, IFolderSteps? steps = null)
    {
        OwnedFolder.Write(dir, Marker, Kind, tmp =>
        {
            var figures = ReportFigures.Build(report).ToList();
            if (model is not null && ReportFigures.Model(report, model) is { } modelFigure)
            {
                figures.Add(modelFigure);
            }

            var rendered = new List<(Figure, string)>(figures.Count);
            for (var i = 0; i < figures.Count; i++)
            {
                progress?.Invoke("drawing figures", i, figures.Count);
                var f = figures[i];
                var svg = f.Svg();
                File.WriteAllBytes(Path.Combine(tmp, f.Name + ".png"), f.Png());
                File.WriteAllText(Path.Combine(tmp, f.Name + ".svg"), svg, Utf8);
                rendered.Add((f, svg));
            }

            progress?.Invoke("drawing figures", figures.Count, figures.Count);
            File.WriteAllText(Path.Combine(tmp, "runs.csv"), ReportTables.Runs(report), Utf8);
            File.WriteAllText(Path.Combine(tmp, "field.csv"), ReportTables.Field(report), Utf8);
            using (var json = File.Create(Path.Combine(tmp, "report.json")))
            {
                JsonReport.Write(report, json, NffitApp.Version);
            }

            var text = TextReport.Format(report);
            if (model is not null)
            {
                using (var json = File.Create(Path.Combine(tmp, "model.json")))
                {
                    ComparisonJson.Write(model, json, NffitApp.Version, report.ParamUnits, report.TimeUnit);
                }

                text += Environment.NewLine + "Reduced model" + Environment.NewLine + ComparisonText.Format(model, report.ParamUnits);
            }

            File.WriteAllText(Path.Combine(tmp, "report.txt"), text, Utf8);
            File.WriteAllText(Path.Combine(tmp, "report.html"),
                HtmlReport.Build(report, rendered, new HtmlReportOptions { Source = source, ToolVersion = NffitApp.Version }, model), Utf8);
        }, steps);
    }

    private static readonly UTF8Encoding Utf8 = new(encoderShouldEmitUTF8Identifier: false);
}
