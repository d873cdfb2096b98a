using System.Globalization;
using NormalFormFit.Reporting.Tables;

namespace NormalFormFit.Tests.Reporting;

public class ReportTablesTests
{
    [Fact]
    public void RunsCsv_HasTheHeaderAndOneRowPerRun()
    {
        var lines = ReportTables.Runs(DemoReport.Report).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);

        Assert.Equal(string.Join(",", ReportTables.RunColumns), lines[0]);
        Assert.Equal(DemoReport.Report.Runs.Count, lines.Length - 1);
        Assert.All(lines, l => Assert.Equal(ReportTables.RunColumns.Count, l.Split(',').Length));
    }

    [Fact]
    public void RunsCsv_RoundTripsEveryNumberInTheInvariantCulture()
    {
        var lines = ReportTables.Runs(DemoReport.Report).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        var a = Array.IndexOf([.. ReportTables.RunColumns], "a");
        for (var i = 0; i < DemoReport.Report.Runs.Count; i++)
        {
            var cells = lines[i + 1].Split(',');

            // "R" formatting round-trips a double exactly (.NET numeric format strings documentation).
            Assert.Equal(DemoReport.Report.Runs[i].Bottleneck!.A.Value, double.Parse(cells[a], CultureInfo.InvariantCulture));
        }
    }

    [Fact]
    public void FieldCsv_HoldsEveryBinOfEveryRun_WithA95PercentBand()
    {
        var lines = ReportTables.Field(DemoReport.Report).Split("\r\n", StringSplitOptions.RemoveEmptyEntries);
        var bins = DemoReport.Report.Runs.Sum(r => r.Field?.Centres.Length ?? 0);

        Assert.Equal(bins + 1, lines.Length);
        foreach (var line in lines.Skip(1).Where(l => !l.Contains(",,", StringComparison.Ordinal)))
        {
            var c = line.Split(',').Skip(3).Select(x => double.Parse(x, CultureInfo.InvariantCulture)).ToArray();

            // Normal 97.5% quantile 1.96 (to three digits); the band is written rounded to double precision only.
            Assert.Equal(c[0] - (1.96 * c[1]), c[2], 1e-12);
            Assert.Equal(c[0] + (1.96 * c[1]), c[3], 1e-12);
        }
    }

    [Theory]
    [InlineData("plain.csv", "plain.csv")]
    [InlineData("a,b.csv", "\"a,b.csv\"")]
    [InlineData("say \"hi\".csv", "\"say \"\"hi\"\".csv\"")]
    public void Cells_AreQuotedAsRfc4180Requires(string cell, string expected)
    {
        // RFC 4180 §2.6–2.7: fields with commas or quotes are enclosed in quotes, inner quotes doubled.
        Assert.Equal(expected, ReportTables.Quote(cell));
    }
}
