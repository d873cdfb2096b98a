using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>
/// The times a run was sampled at, for sampling a replicate of it the same way: camera frames with some dropped, an
/// irregular clock, a gap. Replicates simulated on a regular grid instead had no missing frames, and their misfit Q*
/// came out about three times smaller than the data's on camera recordings with 4% of the frames dropped, so the
/// correct model was rejected in 6 of 10 repeats (docs/compare-notes.md, "Position recordings").
/// </summary>
/// <remarks>
/// When the times lie on a grid of the median step (every time within 10⁻³ of a step of a grid point: a frame clock
/// with dropped frames), the simulation is run on that grid and the replicate keeps the same grid points. Otherwise it
/// is run at a quarter of the median step and its phase interpolated linearly at the run's times (the interpolation
/// error of a smooth phase, of order f·f′·h²/8 at step h, is then 1/16 of that at the median step).
/// Measurement noise is added at the kept samples only.
/// </remarks>
internal sealed class SamplingPattern
{
    private const double GridTolerance = 1e-3;
    private const int Refine = 4;

    private readonly double[] _offsets;
    private readonly bool _onGrid;

    private SamplingPattern(double[] offsets, double step, bool onGrid)
    {
        _offsets = offsets;
        _onGrid = onGrid;
        SimulationStep = onGrid ? step : step / Refine;
    }

    /// <summary>Sampling interval of the simulation.</summary>
    public double SimulationStep { get; }

    /// <summary>
    /// The pattern of <paramref name="times"/>; null when there are too few, they do not increase, or they are a regular
    /// grid with no sample missing (then the replicate is sampled on its own regular grid, as before).
    /// </summary>
    public static SamplingPattern? Of(double[]? times)
    {
        if (times is null || times.Length < 16)
        {
            return null;
        }

        var steps = new double[times.Length - 1];
        for (var k = 1; k < times.Length; k++)
        {
            steps[k - 1] = times[k] - times[k - 1];
        }

        Array.Sort(steps);
        var step = steps[steps.Length / 2];
        if (!(step > 0) || !double.IsFinite(step) || !(steps[0] > 0))
        {
            return null;
        }

        var offsets = times.Select(t => t - times[0]).ToArray();
        var onGrid = offsets.All(o => Math.Abs(o - (step * Math.Round(o / step))) <= GridTolerance * step);

        // A regular clock with no sample missing is what the plain simulation gives already.
        return onGrid && (long)Math.Round(offsets[^1] / step) + 1 == times.Length ? null : new SamplingPattern(offsets, step, onGrid);
    }

    /// <summary>
    /// The simulated phase <paramref name="phase"/> at the run's sample times that the simulation reached, with white
    /// measurement noise of SD <paramref name="sigma"/> (its own stream of <paramref name="seed"/>).
    /// </summary>
    public (double[] Time, double[] Phase) Sample(double[] time, double[] phase, double sigma, int seed)
    {
        var noise = GaussianSource.Create(seed, stream: 11);
        var t = new List<double>(_offsets.Length);
        var p = new List<double>(_offsets.Length);
        var end = time[^1];
        var j = 0;
        foreach (var o in _offsets)
        {
            if (o > end + (1e-9 * SimulationStep))
            {
                break;
            }

            double value;
            if (_onGrid)
            {
                var m = (int)Math.Round(o / SimulationStep);
                if (m >= phase.Length)
                {
                    break;
                }

                value = phase[m];
            }
            else
            {
                while (j + 1 < time.Length - 1 && time[j + 1] <= o)
                {
                    j++;
                }

                var span = time[j + 1] - time[j];
                var f = span > 0 ? Math.Clamp((o - time[j]) / span, 0.0, 1.0) : 0.0;
                value = phase[j] + (f * (phase[j + 1] - phase[j]));
            }

            t.Add(o);
            p.Add(value + (sigma * noise.Next()));
        }

        return ([.. t], [.. p]);
    }
}
