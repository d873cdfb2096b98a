namespace NormalFormFit.Simulation;

/// <summary>How a camera sees a marker on a rotor. Defaults: a 200 px circle seen at 50° tilt, rotated 20° in the image, y down.</summary>
public sealed record CameraOptions
{
    /// <summary>Radius of the marker's circle in pixels (as it would appear face-on).</summary>
    public double RadiusPixels { get; init; } = 200;

    /// <summary>Angle between the rotor's axis and the line of sight, degrees (0 = face-on).</summary>
    public double TiltDegrees { get; init; } = 50;

    /// <summary>Rotation of the projected ellipse in the image, degrees.</summary>
    public double ImageRotationDegrees { get; init; } = 20;

    /// <summary>Image position of the rotor's axis, pixels.</summary>
    public double CentreX { get; init; } = 640;

    /// <summary>Image position of the rotor's axis, pixels.</summary>
    public double CentreY { get; init; } = 360;

    /// <summary>Rows of the image grow downward (the usual image convention).</summary>
    public bool YDown { get; init; } = true;

    /// <summary>SD of Gaussian noise on each pixel coordinate.</summary>
    public double PixelNoise { get; init; } = 0.5;

    /// <summary>Probability that a frame is lost (its row is missing from the file).</summary>
    public double DropFraction { get; init; } = 0.04;

    /// <summary>Seed of the noise and the dropped frames.</summary>
    public int Seed { get; init; } = 1;
}

/// <summary>A tracked marker: frame times and pixel positions (dropped frames left out).</summary>
/// <param name="Time">Frame times.</param>
/// <param name="X">Column, pixels.</param>
/// <param name="Y">Row (y down) or height (y up), pixels.</param>
/// <param name="Phase">True rotor angle at each kept frame (unwrapped), for checks.</param>
public sealed record PositionTrack(double[] Time, double[] X, double[] Y, double[] Phase);

/// <summary>
/// A marker on a rotor seen by a camera: orthographic projection of the circle (R cos φ, R sin φ) of a rotor whose
/// axis is tilted by τ from the line of sight, giving (R cos φ, R cos τ sin φ); then rotated by ρ in the image,
/// shifted to the image centre, flipped when y points down, with Gaussian pixel noise and randomly dropped frames.
/// Perspective is neglected (a small rotor far from the lens; common practice, no source).
/// </summary>
public static class CameraView
{
    /// <summary>Views a simulated run; <paramref name="secondsPerTimeUnit"/> converts the model's time to seconds.</summary>
    public static PositionTrack Project(SimulatedRun run, double secondsPerTimeUnit, CameraOptions options)
    {
        ArgumentNullException.ThrowIfNull(run);
        ArgumentNullException.ThrowIfNull(options);
        var rng = GaussianSource.Create(options.Seed, stream: 7);
        var tau = options.TiltDegrees * Math.PI / 180;
        var (sr, cr) = Math.SinCos(options.ImageRotationDegrees * Math.PI / 180);
        var r = options.RadiusPixels;
        var t = new List<double>();
        var x = new List<double>();
        var y = new List<double>();
        var phi = new List<double>();
        for (var i = 0; i < run.Time.Length; i++)
        {
            var noiseX = options.PixelNoise * rng.Next();
            var noiseY = options.PixelNoise * rng.Next();
            if (rng.Uniform.NextDouble() < options.DropFraction)
            {
                continue;
            }

            var (s, c) = Math.SinCos(run.TruePhase[i]);
            var px = r * c;
            var py = r * Math.Cos(tau) * s;
            var ix = (cr * px) - (sr * py);
            var iy = (sr * px) + (cr * py);
            t.Add(run.Time[i] * secondsPerTimeUnit);
            x.Add(options.CentreX + ix + noiseX);
            y.Add((options.YDown ? options.CentreY - iy : options.CentreY + iy) + noiseY);
            phi.Add(run.TruePhase[i]);
        }

        return new PositionTrack([.. t], [.. x], [.. y], [.. phi]);
    }

    /// <summary>Times at which an unwrapped phase crosses level + 2πk upward, by linear interpolation (event times).</summary>
    public static double[] CrossingTimes(IReadOnlyList<double> time, IReadOnlyList<double> phase, double level)
    {
        ArgumentNullException.ThrowIfNull(time);
        ArgumentNullException.ThrowIfNull(phase);
        var result = new List<double>();
        for (var i = 1; i < time.Count; i++)
        {
            var k = Math.Floor((phase[i] - level) / (2 * Math.PI));
            var target = level + (2 * Math.PI * k);
            if (phase[i - 1] < target && phase[i] >= target)
            {
                var f = (target - phase[i - 1]) / (phase[i] - phase[i - 1]);
                result.Add(time[i - 1] + (f * (time[i] - time[i - 1])));
            }
        }

        return [.. result];
    }
}
