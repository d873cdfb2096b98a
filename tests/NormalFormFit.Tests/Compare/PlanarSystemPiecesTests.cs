using System.Text.Json;
using NormalFormFit.Analysis;
using NormalFormFit.Compare;

namespace NormalFormFit.Tests.Compare;

/// <summary>
/// The pieces of a planar comparison checked against SciPy: the limit-cycle period of a system written in the
/// expression language and the fold of its equilibria, for the Morris–Lecar model (Morris &amp; Lecar 1981) with the
/// class-I parameter set of Rinzel &amp; Ermentrout (1989; values from memory, as in Simulation/MorrisLecar.cs) and an
/// invented second class-I set. Reference: Reference/planar_morris_lecar.json from make_planar_morris_lecar_reference.py
/// (SciPy 1.10.1: fsolve on (f, g, det J); solve_ivp DOP853 with event location for periods).
/// </summary>
public class PlanarSystemPiecesTests
{
    /// <summary>The Morris–Lecar equations in the expression language, V in mV, t in ms, μ = I in μA/cm².</summary>
    internal static string MorrisLecarSystem(double gCa = 4, double phi = 1.0 / 15, double v3 = 12, double v4 = 17.4) =>
        FormattableString.Invariant(
            $"v' = (mu - 2*(v + 60) - {gCa:R}*0.5*(1 + tanh((v + 1.2)/18))*(v - 120) - 8*w*(v + 84))/20; w' = {phi:R}*(0.5*(1 + tanh((v - {v3:R})/{v4:R})) - w)*cosh((v - {v3:R})/(2*{v4:R}))");

    private static JsonElement Reference(string set)
    {
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "Reference", "planar_morris_lecar.json")));
        return json.RootElement.GetProperty("sets").GetProperty(set).Clone();
    }

    private static PlanarProblem Problem(string text, params double[] labs)
    {
        var model = PlanarModel.Parse(text, "v").Value!;
        var runs = labs.Select(m => new PlanarRun(null!, m, true, 1, 1, 4000, 0.05)).ToList();
        return new PlanarProblem(model, runs, [0.0, 1.0], [true, true], 0.0, 0.0);
    }

    [Theory]
    [InlineData("class_one", 4.0, 1.0 / 15)]
    [InlineData("wrong_class_one", 4.4, 0.1)]
    public void LimitCyclePeriods_MatchSciPysDop853(string set, double gCa, double phi)
    {
        var reference = Reference(set);
        var problem = Problem(MorrisLecarSystem(gCa, phi), 50);
        foreach (var p in reference.GetProperty("periods_ms").EnumerateArray())
        {
            var (current, period) = (p[0].GetDouble(), p[1].GetDouble());
            var cycle = problem.Cycle([0.0, 1.0], current);
            Assert.True(cycle.Fires);

            // Both sides integrate to ~1e-10; 1e-6 relative leaves room for the Hermite location of the crossings.
            Assert.Equal(period, cycle.Period, 1e-6 * period);
        }
    }

    [Theory]
    [InlineData("class_one", 4.0, 1.0 / 15)]
    [InlineData("wrong_class_one", 4.4, 0.1)]
    public void FoldOfTheEquilibria_MatchesSciPysFsolve(string set, double gCa, double phi)
    {
        var reference = Reference(set);
        var problem = Problem(MorrisLecarSystem(gCa, phi), 30, 60);
        var fold = PlanarOnset.FoldNear(problem, [0.0, 1.0], -35, 0.005, reference.GetProperty("fold_current").GetDouble() - 1.0);
        Assert.NotNull(fold);
        Assert.Equal(reference.GetProperty("fold_current").GetDouble(), fold.MuModel, 1e-7);
        Assert.Equal(reference.GetProperty("fold_V_mV").GetDouble(), fold.X0, 1e-4);
    }

    [Fact]
    public void OnsetBySimulation_BracketsTheFold_ForTheClassOneSet()
    {
        // Runs from 38 to 46 μA/cm²; the fold (knee of I∞, Reference/morris_lecar_knee.json) at 39.96315309.
        var problem = Problem(MorrisLecarSystem(), 38, 39, 40.5, 42, 46);
        var onset = PlanarOnset.BySimulation(problem, [0.0, 1.0]);
        Assert.NotNull(onset);
        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(AppContext.BaseDirectory, "Reference", "morris_lecar_knee.json")));
        var knee = json.RootElement.GetProperty("onset_current_uA_per_cm2").GetDouble();

        // A cycle slower than a quarter of the cap (10 000 ms here) counts as silent, so the simulated onset lies just
        // above the fold: by (π/(T_cap/4))²/(ab) ≈ 1e-4 at most for this model's square-root law (measured 2e-5).
        Assert.InRange(onset.Value - knee, -onset.HalfWidth, 2e-3);
        var fold = PlanarOnset.FoldNear(problem, [0.0, 1.0], onset.RestX0, onset.RestX1, onset.SilentLab);
        Assert.NotNull(fold);
        Assert.Equal(knee, fold.MuLab, 1e-7);
    }
}
