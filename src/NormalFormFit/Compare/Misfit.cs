namespace NormalFormFit.Compare;

/// <summary>Sums of squared residuals of one fit: in total, per run (fields and period), per run's field, per phase region.</summary>
internal sealed record Misfit(double Total, double[] Run, double[] RunField, int[] RunFieldPoints, double[] RunSum, double[] Period, double[] Region, double[] RegionSum, int[] RegionPoints)
{
    /// <summary>The sums for residuals <paramref name="r"/> of <paramref name="problem"/>, regions of equal width in the data's phase.</summary>
    public static Misfit Of(ComparisonProblem problem, double[] r, int regionCount)
    {
        var n = problem.Runs.Count;
        var run = new double[n];
        var runField = new double[n];
        var runPoints = new int[n];
        var runSum = new double[n];
        var period = new double[n];
        var region = new double[regionCount];
        var regionSum = new double[regionCount];
        var regionPoints = new int[regionCount];
        var width = 2.0 * Math.PI / regionCount;
        for (var i = 0; i < n; i++)
        {
            var data = problem.Runs[i];
            foreach (var point in data.FieldIndexByBin)
            {
                if (point < 0)
                {
                    continue;
                }

                var sq = r[point] * r[point];
                runField[i] += sq;
                runSum[i] += r[point];
                runPoints[i]++;
                var g = Math.Min((int)(problem.FieldCentre(point) / width), regionCount - 1);
                region[g] += sq;
                regionSum[g] += r[point];
                regionPoints[g]++;
            }

            period[i] = data.PeriodIndex >= 0 ? r[data.PeriodIndex] : double.NaN;
            run[i] = runField[i] + (data.PeriodIndex >= 0 ? period[i] * period[i] : 0.0);
        }

        return new Misfit(r.Sum(x => x * x), run, runField, runPoints, runSum, period, region, regionSum, regionPoints);
    }

    /// <summary>
    /// Per-run and per-region summaries. The expectation of each sum for a correct model is the mean of the same sum
    /// over the replicates (per point for regions, whose bins may differ in number); mean residuals are expressed in
    /// units of the replicates' root-mean-square residual, the reconstruction's actual scatter.
    /// </summary>
    public static (List<RunMisfit> Runs, List<RegionMisfit> Regions) Summaries(ComparisonProblem problem, Misfit observed, List<Replicate> ok)
    {
        var runs = new List<RunMisfit>();
        for (var i = 0; i < problem.Runs.Count; i++)
        {
            var data = problem.Runs[i];
            var points = observed.RunFieldPoints[i] + (data.PeriodIndex >= 0 ? 1 : 0);
            var expected = ok.Count > 0 ? ok.Average(x => x.Misfit.Run[i]) : points;
            var perPoint = ok.Count > 0 ? ok.Average(x => x.Misfit.RunField[i] / Math.Max(x.Misfit.RunFieldPoints[i], 1)) : 1.0;
            var mean = observed.RunFieldPoints[i] > 0 ? observed.RunSum[i] / observed.RunFieldPoints[i] / Math.Sqrt(perPoint) : double.NaN;
            var periodScale = ok.Count > 0 && data.PeriodIndex >= 0 ? Math.Sqrt(ok.Average(x => x.Misfit.Period[i] * x.Misfit.Period[i])) : 1.0;
            var periodResidual = observed.Period[i] / periodScale;
            runs.Add(new RunMisfit(data.File, data.MuLab, points, observed.Run[i], expected, mean, periodResidual));
        }

        var count = observed.Region.Length;
        var width = 2.0 * Math.PI / count;
        var regions = new List<RegionMisfit>();
        for (var g = 0; g < count; g++)
        {
            var n = observed.RegionPoints[g];
            var perPoint = ok.Count > 0 ? ok.Average(x => x.Misfit.Region[g] / Math.Max(x.Misfit.RegionPoints[g], 1)) : 1.0;
            regions.Add(new RegionMisfit(g * width, (g + 1) * width, n, observed.Region[g], n * perPoint, n > 0 ? observed.RegionSum[g] / n / Math.Sqrt(perPoint) : double.NaN));
        }

        return (runs, regions);
    }
}
