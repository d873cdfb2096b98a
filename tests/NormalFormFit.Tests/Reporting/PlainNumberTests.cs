using System.Net;
using System.Text.RegularExpressions;
using NormalFormFit.Numerics;
using NormalFormFit.Tests.Cli;
using NormalFormFit.Tests.Ingest;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// Numbers a reader sees are in plain notation where it fits and as a power of ten written out where it does not
/// (<see cref="ErrorDigits.Plain"/>, the rule in docs/glossary.md): never the "1.5E-05" of a computer format, in the
/// text summary and in the page (its text and the text of its figures) the CLI writes, on every kind of data.
/// </summary>
public partial class PlainNumberTests
{
    public static TheoryData<string> DataSets => ["demo-stirrer", "demo-tracker", "events", "signal", "signal-protophase", "mixed"];

    [Theory]
    [InlineData(4.6e-5, 2, "0.000046")]
    [InlineData(1.5e-5, 2, "0.000015")]
    [InlineData(1e-5, 2, "0.00001")]
    [InlineData(1.45e4, 3, "14500")]
    [InlineData(-2.5e-6, 2, "-0.0000025")]
    [InlineData(1.2345, 3, "1.23")]
    [InlineData(7.63e-8, 3, "7.63×10⁻⁸")]
    [InlineData(6.1e10, 2, "6.1×10¹⁰")]
    [InlineData(123456789, 3, "1.23×10⁸")]
    [InlineData(654321, 3, "654000")]
    [InlineData(9.996e8, 3, "1×10⁹")]
    [InlineData(0.0, 3, "0")]
    [InlineData(2.5e-6, 0, "0.0000025")] // 0: the digits that read the value back
    public void Plain_WritesDecimalsWhileThePowerOfTenIsModerate_AndAPowerOfTenBeyond(double x, int digits, string expected) =>
        Assert.Equal(expected, ErrorDigits.Plain(x, digits));

    [Theory]
    [MemberData(nameof(DataSets))]
    public void TheTextSummaryAndThePage_HaveNoExponentNotation(string dataSet)
    {
        using var files = new RecordingFiles();
        var manifest = dataSet switch
        {
            "demo-stirrer" or "demo-tracker" => Path.Combine(DiagnosticsInTextTests.RepoRoot(), "datasets", dataSet, "manifest.csv"),
            "events" => DiagnosticsInTextTests.WriteEvents(files),
            "signal" or "signal-protophase" => DiagnosticsInTextTests.WriteSignal(files),
            _ => MixedRunScenario.Write(files),
        };
        var outDir = Path.Combine(files.Folder, "report");
        string[] extra = dataSet == "signal-protophase" ? ["--signal-protophase"] : [];
        var (code, _, err) = CliTestHost.Run(["analyze", manifest, "--out", outDir, "--quiet", .. extra]);
        Assert.True(code == 0, err);
        var text = File.ReadAllText(Path.Combine(outDir, "report.txt"));
        var page = File.ReadAllText(Path.Combine(outDir, "report.html"));

        // What a reader of the page sees: its text outside style and figures, and the text drawn in the figures.
        var figureText = string.Join("\n", SvgText().Matches(page).Select(m => m.Groups[1].Value));
        var pageText = Tag().Replace(Figure().Replace(Style().Replace(page, string.Empty), string.Empty), " ");
        foreach (var (where, content) in new[] { ("text summary", text), ("page", WebUtility.HtmlDecode(pageText)), ("figures", WebUtility.HtmlDecode(figureText)) })
        {
            var found = Exponent().Matches(content).Select(m => Context(content, m.Index)).ToList();
            Assert.True(found.Count == 0, $"{dataSet}, {where}: exponent notation in {string.Join(" | ", found.Take(5))}");
        }

        // The scan is not vacuous: the page and the text carry numbers.
        Assert.Matches("[0-9]\\.[0-9]", text);
        Assert.Matches("[0-9]\\.[0-9]", pageText);
    }

    private static string Context(string s, int at) => s.Substring(Math.Max(0, at - 40), Math.Min(s.Length - Math.Max(0, at - 40), 60)).ReplaceLineEndings(" ");

    [GeneratedRegex("(?<![A-Za-z0-9_])[-+]?[0-9]+(?:\\.[0-9]+)?[eE][-+]?[0-9]+(?![A-Za-z0-9_])")]
    private static partial Regex Exponent();

    [GeneratedRegex("<style>.*?</style>", RegexOptions.Singleline)]
    private static partial Regex Style();

    [GeneratedRegex("<svg.*?</svg>", RegexOptions.Singleline)]
    private static partial Regex Figure();

    [GeneratedRegex("<text[^>]*>([^<]*)</text>", RegexOptions.Singleline)]
    private static partial Regex SvgText();

    [GeneratedRegex("<[^>]+>")]
    private static partial Regex Tag();
}
