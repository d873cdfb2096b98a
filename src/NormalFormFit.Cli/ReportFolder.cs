using System.Text;
using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using NormalFormFit.Reporting;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;
using NormalFormFit.Reporting.Tables;

namespace NormalFormFit.Cli;

/// <summary>
/// Writes the report folder whole or not at all: everything goes to a temporary folder beside the target,
/// which then takes the target's place by rename. A folder is only replaced when it is empty or holds an
/// earlier report (it carries the marker file), so no user files are ever overwritten.
/// </summary>
internal static class ReportFolder
{
    /// <summary>File that marks a folder as written by nffit (so a later run may replace it).</summary>
    public const string Marker = ".nffit-report";

    /// <summary>Checks the target before any work: null when it can be written, else the reason.</summary>
    public static string? Check(string dir)
    {
        var full = Full(dir);
        var parent = Path.GetDirectoryName(full);
        if (parent is null || !Directory.Exists(parent))
        {
            return $"the folder that should hold it, '{parent}', does not exist; create it first";
        }

        if (File.Exists(full))
        {
            return "a file of that name exists; give the name of a new or empty folder";
        }

        if (Directory.Exists(full) && Directory.EnumerateFileSystemEntries(full).Any() && !File.Exists(Path.Combine(full, Marker)))
        {
            return "the folder exists and holds files that are not an nffit report; give a new or empty folder";
        }

        return null;
    }

    /// <summary>Renders and writes every file of the report; reports each step to <paramref name="progress"/>.</summary>
    /// <param name="dir">Target folder.</param>
    /// <param name="report">The analysis.</param>
    /// <param name="source">The manifest's name, for the page's heading.</param>
    /// <param name="progress">Step, done, total.</param>
    /// <param name="model">A model comparison of the same runs: adds its figure, a section of the page, model.json and its text.</param>
    public static void Write(string dir, AnalysisReport report, string source, Action<string, int, int>? progress = null, ModelComparison? model = null)
    {
        var full = Full(dir);
        var parent = Path.GetDirectoryName(full)!;
        var name = Path.GetFileName(full);
        var tmp = Path.Combine(parent, $".{name}.{Environment.ProcessId}.tmp");
        var old = Path.Combine(parent, $".{name}.{Environment.ProcessId}.old");
        try
        {
            if (Directory.Exists(tmp))
            {
                Directory.Delete(tmp, recursive: true);
            }

            Directory.CreateDirectory(tmp);
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
                    ComparisonJson.Write(model, json, NffitApp.Version);
                }

                text += Environment.NewLine + "Reduced model" + Environment.NewLine + ComparisonText.Format(model);
            }

            File.WriteAllText(Path.Combine(tmp, "report.txt"), text, Utf8);
            File.WriteAllText(Path.Combine(tmp, "report.html"),
                HtmlReport.Build(report, rendered, new HtmlReportOptions { Source = source, ToolVersion = NffitApp.Version }, model), Utf8);
            File.WriteAllText(Path.Combine(tmp, Marker), "written by nffit " + NffitApp.Version + "\n", Utf8);

            if (Directory.Exists(full))
            {
                Directory.Move(full, old);
                Directory.Move(tmp, full);
                Directory.Delete(old, recursive: true);
            }
            else
            {
                Directory.Move(tmp, full);
            }
        }
        finally
        {
            if (Directory.Exists(tmp))
            {
                Directory.Delete(tmp, recursive: true);
            }

            // Only left behind if the swap failed half-way: put the earlier report back.
            if (Directory.Exists(old) && !Directory.Exists(full))
            {
                Directory.Move(old, full);
            }
        }
    }

    private static readonly UTF8Encoding Utf8 = new(encoderShouldEmitUTF8Identifier: false);

    private static string Full(string dir) => Path.TrimEndingDirectorySeparator(Path.GetFullPath(dir));
}
