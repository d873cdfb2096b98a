using NormalFormFit.Analysis;
using NormalFormFit.Compare;
using ScottPlot;

namespace NormalFormFit.Reporting.Figures;

/// <summary>The figure of a model comparison: each run's reconstructed field beside the fitted model.</summary>
public static partial class ReportFigures
{
    /// <summary>
    /// θ̇(θ) of every run that entered the comparison (markers, with the pointwise 95% band) and the fitted model at the
    /// run's μ_model = c0 + c1·μ_lab (line). Null when no run has a field or the expression cannot be read back.
    /// </summary>
    public static Figure? Model(AnalysisReport report, ModelComparison comparison)
    {
        ArgumentNullException.ThrowIfNull(report);
        ArgumentNullException.ThrowIfNull(comparison);
        var expression = ModelExpression.Parse(comparison.Expression).Value;
        var runs = Ordered(report).Where(r => r.IsTurning && r.Field is not null).ToList();
        if (expression is null || runs.Count == 0)
        {
            return null;
        }

        FigureFonts.Register();
        var evaluator = expression.CreateEvaluator();
        var pars = comparison.Parameters.Select(p => p.Value).ToArray();
        var plot = NewPlot("Reconstructed fields and the fitted model", "phase θ (rad)", $"dθ/dt (rad per {TimeUnit(report)})");
        // The phase axis as in the field figure: centred on the runs' bottleneck (circular mean of θ*).
        var centre = BottleneckCentre(runs);
        for (var i = 0; i < runs.Count; i++)
        {
            var r = runs[i];
            var colour = FigurePalette.Run(i, runs.Count);
            var (xs, values) = FieldWithBand(plot, r.Field!, centre, colour);
            var marks = plot.Add.ScatterPoints(xs, values, colour);
            marks.MarkerSize = 4;
            marks.LegendText = ParamValue(report, r.Param);
        }

        // The model last, in its own style (plum dashes over every run, a colour no run has), listed once after the runs.
        var labelled = false;
        for (var i = 0; i < runs.Count; i++)
        {
            var r = runs[i];

            // The run's phase was oriented to increase; the model is compared in that orientation, s·f(s·θ).
            var s = r.Direction < 0 ? -1.0 : 1.0;
            var muModel = comparison.Offset.Value + (comparison.Scale.Value * r.Param);
            var grid = Grid(centre - Math.PI, centre + Math.PI, 241);
            var model = grid.Select(t => s * evaluator.Evaluate(s * t, muModel, pars, [])).ToArray();
            if (model.All(double.IsFinite))
            {
                var line = plot.Add.ScatterLine(grid, model, FigurePalette.Model);
                line.LineWidth = 2.2f;
                line.LinePattern = LinePattern.Dashed;
                if (!labelled)
                {
                    line.LegendText = "fitted model (each run's μ)";
                    labelled = true;
                }
            }
        }

        plot.ShowLegend(Edge.Right);
        return new Figure("model", "The runs against the fitted model",
            "Markers: each run's reconstructed phase velocity with its pointwise 95% band (shaded), coloured from dark (lowest μ) " +
            "to light (highest μ), on the phase axis of the field figure (centred on the bottleneck). Plum dashes: the fitted model dθ/dt = " + comparison.Expression + " at each run's " +
            "μ_model = c0 + c1·μ_lab, with the bias-corrected parameters. The fields are bin means smoothed by the spline, " +
            "which flattens their extremes; the parameters have that bias removed, so a correct model may stand just outside " +
            "the bands at the extremes. The bands are those of the field's bootstrap and understate its scatter for runs " +
            "with few revolutions; the verdict comes from the simulated replicates instead.", plot);
    }
}
