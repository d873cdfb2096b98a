using System.Text.Json;
using FsCheck;
using FsCheck.Xunit;
using NormalFormFit.Tests.Cli;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// A marker tracker's export of a rotor (<see cref="TrackerScenario"/>: one file per motor voltage,
/// <c>frame,time_s,x_px,y_px,confidence</c>, image y down, dropped frames, bursts of lost frames, blank x/y, wrong
/// positions) analysed as a new user would: with no options at all. The truth is the simulation's own onset, 6 V.
/// </summary>
public class TrackerAcceptanceTests
{
    private static readonly Lazy<IReadOnlyList<TrackerScenario.Run>> Runs = new(() => TrackerScenario.Simulate());

    // Nearest run above onset: 6.12 V; "a small fraction of the distance" to it: a tenth.
    private const double Tolerance = 0.1 * (6.12 - TrackerScenario.OnsetVolts);

    [Fact]
    public void TrackerExport_WithNoOptions_FindsBothOnsetsWithinATenthOfTheDistanceToTheNearestRun_AndIntervalsCoverTheTruth()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = TrackerScenario.Write(dir.Path, Runs.Value);
        var (code, json, err) = CliTestHost.Run("analyze", manifest, "--json", "-");
        Assert.True(code == 0, err);
        using var doc = JsonDocument.Parse(json);
        var onset = doc.RootElement.GetProperty("onset");
        foreach (var route in new[] { "from_bottleneck", "from_period" })
        {
            var r = onset.GetProperty(route);
            var value = r.GetProperty("value").GetDouble();
            Assert.True(Math.Abs(value - TrackerScenario.OnsetVolts) < Tolerance, $"{route}: {value} V");
            Assert.InRange(TrackerScenario.OnsetVolts, r.GetProperty("ci95_low").GetDouble(), r.GetProperty("ci95_high").GetDouble());
        }
    }

    [Fact]
    public void TrackerExport_TimesEveryTurningRunOverAllItsRevolutions_AndReportsTheStalledRunAsNotTurning()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = TrackerScenario.Write(dir.Path, Runs.Value);
        var (code, json, err) = CliTestHost.Run("analyze", manifest, "--json", "-");
        Assert.True(code == 0, err);
        using var doc = JsonDocument.Parse(json);
        var runs = doc.RootElement.GetProperty("runs").EnumerateArray().ToList();
        Assert.Equal(Runs.Value.Count, runs.Count);
        for (var k = 0; k < runs.Count; k++)
        {
            var truth = Runs.Value[k];
            var run = runs[k];
            var flags = run.GetProperty("flags").EnumerateArray().Select(f => f.GetString()).ToList();
            if (truth.Volts < TrackerScenario.OnsetVolts)
            {
                Assert.Contains("not-turning", flags);
                continue;
            }

            Assert.DoesNotContain("not-turning", flags);
            Assert.DoesNotContain("large-gaps", flags);
            Assert.DoesNotContain("not-an-ellipse", flags);

            // Periods are timed between passages through one phase: W whole turns give W − 1 or W periods.
            var revolutions = run.GetProperty("period").GetProperty("revolutions").GetInt32();
            Assert.True(revolutions >= truth.WholeTurns - 1, $"{truth.Volts} V: {revolutions} of {truth.WholeTurns} turns timed");
        }
    }

    [Fact]
    public void TrackerExport_ReportsTheRowsDroppedAndWhy()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = TrackerScenario.Write(dir.Path, Runs.Value);
        var (code, json, err) = CliTestHost.Run("analyze", manifest, "--json", "-");
        Assert.True(code == 0, err);
        using var doc = JsonDocument.Parse(json);
        var runs = doc.RootElement.GetProperty("runs").EnumerateArray().ToList();
        for (var k = 0; k < runs.Count; k++)
        {
            var truth = Runs.Value[k];
            var dropped = runs[k].GetProperty("rows_dropped");
            Assert.Equal(truth.BlankRows, dropped.GetProperty("blank").GetInt32());
            Assert.Equal(truth.LowGlitches, dropped.GetProperty("low_quality").GetInt32());

            // A wrong position above the threshold is dropped off the orbit or as a phase jump, unless it happened
            // to land on the orbit close to the true position.
            var wrong = dropped.GetProperty("off_orbit").GetInt32() + dropped.GetProperty("phase_jumps").GetInt32();
            Assert.InRange(wrong, 0, truth.HighGlitches + 2);
        }
    }

    [Fact]
    public void TrackerExport_RunsCsvCarriesTheRowsDroppedByReason_AsTheJsonDoes()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = TrackerScenario.Write(Path.Combine(dir.Path, "in"), Runs.Value);
        var report = Path.Combine(dir.Path, "report");
        var (code, json, err) = CliTestHost.Run("analyze", manifest, "--json", "-", "--out", report);
        Assert.True(code == 0, err);
        using var doc = JsonDocument.Parse(json);
        var lines = File.ReadAllLines(Path.Combine(report, "runs.csv"));
        var header = lines[0].Split(',');
        var runs = doc.RootElement.GetProperty("runs").EnumerateArray().ToList();
        Assert.Equal(runs.Count, lines.Length - 1);
        for (var k = 0; k < runs.Count; k++)
        {
            var cells = lines[k + 1].Split(',');
            var dropped = runs[k].GetProperty("rows_dropped");
            foreach (var reason in new[] { "blank", "low_quality", "off_orbit", "phase_jumps", "total" })
            {
                Assert.Equal(dropped.GetProperty(reason).GetInt32().ToString(System.Globalization.CultureInfo.InvariantCulture), cells[Array.IndexOf(header, "rows_dropped_" + reason)]);
            }
        }
    }

    [Fact]
    public void TrackerExport_PutsVoltsAndSecondsInTheJsonAndTheSummary()
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = TrackerScenario.Write(dir.Path, Runs.Value);
        var (_, json, _) = CliTestHost.Run("analyze", manifest, "--json", "-");
        using var doc = JsonDocument.Parse(json);
        var units = doc.RootElement.GetProperty("units");
        Assert.Equal("V", units.GetProperty("param").GetString());
        Assert.Equal("s", units.GetProperty("time").GetString());

        var (code, text, err) = CliTestHost.Run("analyze", manifest);
        Assert.True(code == 0, err);
        Assert.Contains("μ is voltage in V, time in s", text, StringComparison.Ordinal);
        Assert.Contains("T meas (s)", text, StringComparison.Ordinal);
        Assert.Contains("param (V)", text, StringComparison.Ordinal);
        Assert.Matches(@"bottleneck route \(a → 0\):\s+μc = [0-9.]+ ± [0-9.]+ V", text);
    }

    [Fact]
    public void TrackerExport_GivesTheSameOnsets_WithinTheirIntervals_AsTheRowsCleanedByHand()
    {
        using var dir = CliTestHost.NewFolder();
        var raw = TrackerScenario.Write(Path.Combine(dir.Path, "raw"), Runs.Value);
        var clean = TrackerScenario.Write(Path.Combine(dir.Path, "clean"), Runs.Value, clean: true);
        using var a = JsonDocument.Parse(CliTestHost.Run("analyze", raw, "--json", "-").Out);
        using var b = JsonDocument.Parse(CliTestHost.Run("analyze", clean, "--json", "-").Out);
        foreach (var route in new[] { "from_bottleneck", "from_period" })
        {
            var ra = a.RootElement.GetProperty("onset").GetProperty(route);
            var rb = b.RootElement.GetProperty("onset").GetProperty(route);
            Assert.InRange(rb.GetProperty("value").GetDouble(), ra.GetProperty("ci95_low").GetDouble(), ra.GetProperty("ci95_high").GetDouble());
            Assert.InRange(ra.GetProperty("value").GetDouble(), rb.GetProperty("ci95_low").GetDouble(), rb.GetProperty("ci95_high").GetDouble());
        }
    }

    // Fixed cases, not FsCheck's random draws: a property run with a new seed each time made CI flaky. The case
    // (11, 7, 53) is the counterexample FsCheck found when passages inside bridged gaps were timed on the chord (the
    // period route moved by about three standard errors); the cases from seed 12 on were added afterwards, untuned.
    // The case (1, 0, 4) is the counterexample FsCheck found when the bottleneck fit weighted each sample by the time to
    // its neighbours: the samples at the edges of a burst of lost frames carried the burst's length as weight, and the
    // bottleneck route moved by about three standard errors (6.00048 V untroubled, 5.9967 ± 0.0013 V troubled). Since the
    // weights are capped at the median step, 40 draws of (seed, blank, glitch) moved neither route beyond its interval.
    [Theory]
    [InlineData(1, 0, 4)]
    [InlineData(1, 5, 4)]
    [InlineData(2, 10, 8)]
    [InlineData(3, 0, 8)]
    [InlineData(4, 10, 0)]
    [InlineData(5, 3, 3)]
    [InlineData(6, 8, 6)]
    [InlineData(11, 7, 53)]
    [InlineData(12, 9, 7)]
    [InlineData(13, 10, 8)]
    [InlineData(17, 6, 5)]
    [InlineData(21, 8, 8)]
    public void RandomBlankingAndLowQualityGlitches_MoveTheOnsetByLessThanItsErrorAllows(int seed, byte blankPercent, byte glitchPercent)
    {
        Assert.All(Moves(seed, blankPercent, glitchPercent), m => Assert.InRange(m.Reference, m.Value - (MoveBound * m.Se), m.Value + (MoveBound * m.Se)));
    }

    // How far the trouble may move a route's onset, in the troubled export's standard errors: 2.576, the two-sided 99%
    // normal quantile (common practice, no source), because 24 such comparisons are made (12 cases, two routes) and at
    // the 95% level one of them would be expected to exceed by chance. The counterexamples above moved by 2.9 standard
    // errors (the weights at gap edges) and about 3 (passages timed on the chord), so they still fail it. Measured with
    // the bottleneck route's unscaled intervals (normal quantile when χ²/ν ≤ 1): the largest move is case (11, 7, 53),
    // 6.00048 V untroubled against 5.99789 ± 0.00125 V troubled, 2.1 standard errors, just outside the 95% interval.
    private const double MoveBound = 2.576;

    // The same property drawn by FsCheck: random seeds, blanking up to 10 % and low-quality glitches up to 8 % of the
    // rows. The draw is replayed from a fixed generator state so that CI is repeatable; change the state to explore.
    [Property(MaxTest = 8, Replay = "(20261203,97)")]
    public void RandomBlankingAndLowQualityGlitches_DrawnByFsCheck_MoveTheOnsetByLessThanItsErrorAllows(PositiveInt seed, byte blankPercent, byte glitchPercent)
    {
        Assert.All(Moves(seed.Get % 1000, blankPercent, glitchPercent), m => Assert.InRange(m.Reference, m.Value - (MoveBound * m.Se), m.Value + (MoveBound * m.Se)));
    }

    private static List<(double Reference, double Value, double Se)> Moves(int seed, byte blankPercent, byte glitchPercent)
    {
        // Against the same motion exported with no trouble at all (CleanReference).
        var trouble = new TrackerScenario.Trouble
        {
            Seed = seed,
            Blank = (blankPercent % 11) / 100.0,
            LowGlitch = (glitchPercent % 9) / 100.0,
            HighGlitch = 0,
            Dropped = 0.02,
            Bursts = 1 + (seed % 4),
        };
        using var dir = CliTestHost.NewFolder();
        var corrupted = TrackerScenario.Write(Path.Combine(dir.Path, "bad"), TrackerScenario.Simulate(trouble));
        using var a = JsonDocument.Parse(ReferenceJson.Value);
        var (code, json, err) = CliTestHost.Run("analyze", corrupted, "--json", "-");
        Assert.True(code == 0, err);
        using var b = JsonDocument.Parse(json);
        var moves = new List<(double Reference, double Value, double Se)>();
        foreach (var route in new[] { "from_bottleneck", "from_period" })
        {
            // The onset from the untroubled export should lie within MoveBound standard errors of the troubled export's:
            // the trouble moves the estimate by no more than the uncertainty it reports.
            var ra = a.RootElement.GetProperty("onset").GetProperty(route);
            var rb = b.RootElement.GetProperty("onset").GetProperty(route);
            moves.Add((ra.GetProperty("value").GetDouble(), rb.GetProperty("value").GetDouble(), rb.GetProperty("se").GetDouble()));
        }

        return moves;
    }

    private static readonly Lazy<IReadOnlyList<TrackerScenario.Run>> CleanReference = new(() =>
        TrackerScenario.Simulate(new TrackerScenario.Trouble { Dropped = 0, Bursts = 0, Blank = 0, LowGlitch = 0, HighGlitch = 0 }));

    [Fact]
    public void DemoDataset_IsTheScenarioAsWritten()
    {
        // datasets/demo-tracker holds a small version of the scenario (six turns a run) for users to try; regenerate it
        // with NFFIT_UPDATE_GOLDEN=1 when the scenario changes.
        var folder = Path.Combine(RepoRoot(), "datasets", "demo-tracker");
        var runs = TrackerScenario.Simulate(revolutions: 6);
        if (Environment.GetEnvironmentVariable("NFFIT_UPDATE_GOLDEN") == "1")
        {
            TrackerScenario.Write(folder, runs);
        }

        using var dir = CliTestHost.NewFolder();
        TrackerScenario.Write(dir.Path, runs);
        foreach (var file in Directory.GetFiles(dir.Path).Select(Path.GetFileName))
        {
            Assert.Equal(File.ReadAllText(dir.File(file!)), File.ReadAllText(Path.Combine(folder, file!)));
        }
    }

    private static string RepoRoot()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "NormalFormFit.sln")))
        {
            dir = dir.Parent;
        }

        return dir?.FullName ?? throw new InvalidOperationException("repository root not found");
    }

    private static readonly Lazy<string> ReferenceJson = new(() =>
    {
        using var dir = CliTestHost.NewFolder();
        var manifest = TrackerScenario.Write(dir.Path, CleanReference.Value);
        return CliTestHost.Run("analyze", manifest, "--json", "-").Out;
    });
}
