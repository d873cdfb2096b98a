using System.Globalization;
using System.Text.Json;
using NormalFormFit.Ingest;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Ingest;

public class EllipseFitTests
{
    private static (double[] X, double[] Y) Points(double cx, double cy, double a, double b, double tilt, double[] s)
    {
        var (st, ct) = Math.SinCos(tilt);
        return ([.. s.Select(v => cx + (a * Math.Cos(v) * ct) - (b * Math.Sin(v) * st))],
                [.. s.Select(v => cy + (a * Math.Cos(v) * st) + (b * Math.Sin(v) * ct))]);
    }

    [Theory]
    [InlineData(3.0, -2.0, 5.0, 2.0, 30.0)]
    [InlineData(640.0, 360.0, 200.0, 128.6, -20.0)]
    [InlineData(0.0, 0.0, 1.0, 0.999, 80.0)]
    public void Fit_OfNoiseFreePointsOnAKnownEllipse_RecoversItExactly(double cx, double cy, double a, double b, double tiltDeg)
    {
        // Points on a known ellipse (definition of the parametric form; no source needed). A direct least-squares fit
        // has zero residual there, so only rounding remains: 1e-8 relative is ~10⁷ ulps of headroom.
        var s = Enumerable.Range(0, 37).Select(k => 0.1 + (k * 0.17)).ToArray();
        var (x, y) = Points(cx, cy, a, b, tiltDeg * Math.PI / 180, s);
        var e = EllipseFit.Fit(x, y, []);
        Assert.NotNull(e);
        var scale = a;
        Assert.InRange(Math.Abs(e!.CentreX - cx), 0, 1e-8 * scale);
        Assert.InRange(Math.Abs(e.CentreY - cy), 0, 1e-8 * scale);
        Assert.InRange(Math.Abs(e.SemiMajor - a), 0, 1e-8 * scale);
        Assert.InRange(Math.Abs(e.SemiMinor - b), 0, 1e-8 * scale);
        // Near-circles determine the tilt poorly: 1e-8 rad divided by the relative axis difference.
        Assert.InRange(Math.Abs(e.Tilt - (tiltDeg * Math.PI / 180)), 0, 1e-8 / ((a - b) / a));
        // The parametric angle is s plus a constant (0 here, as the major axis is the parametrisation's first axis).
        for (var i = 0; i < s.Length; i++)
        {
            var (angle, radius) = e.Normalize(x[i], y[i]);
            Assert.InRange(Math.Abs(Math.IEEERemainder(angle - s[i], 2 * Math.PI)), 0, 1e-6);
            Assert.InRange(Math.Abs(radius - 1), 0, 1e-8);
        }
    }

    [Theory]
    [InlineData("noisy-full")]
    [InlineData("noisy-arc-weighted")]
    public void Fit_OfNoisyPoints_MatchesTheFullGeneralizedEigenproblemInScipy(string name)
    {
        // Reference: Reference/make_ellipse_reference.py, SciPy 1.10.1 scipy.linalg.eig(S, C) on the 6×6 problem of
        // Fitzgibbon, Pilu & Fisher (1999). Both solve the same minimisation in double precision; the reduced and the
        // full forms differ by rounding only, amplified by the conditioning of S (~10⁶ here), so 1e-7 on the unit-norm
        // conic is a safe bound.
        var folder = Path.Combine(AppContext.BaseDirectory, "Reference");
        var x = new List<double>();
        var y = new List<double>();
        var w = new List<double>();
        foreach (var line in File.ReadLines(Path.Combine(folder, "ellipse_data.csv")))
        {
            var f = line.Split(',');
            if (line.StartsWith('#') || f[0] != name)
            {
                continue;
            }

            x.Add(double.Parse(f[1], CultureInfo.InvariantCulture));
            y.Add(double.Parse(f[2], CultureInfo.InvariantCulture));
            w.Add(double.Parse(f[3], CultureInfo.InvariantCulture));
        }

        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(folder, "ellipse_reference.json")));
        var expected = json.RootElement.GetProperty("cases").EnumerateArray()
            .Single(c => c.GetProperty("name").GetString() == name)
            .GetProperty("conic").EnumerateArray().Select(v => v.GetDouble()).ToArray();
        var e = EllipseFit.Fit([.. x], [.. y], [.. w]);
        Assert.NotNull(e);
        for (var k = 0; k < 6; k++)
        {
            Assert.InRange(Math.Abs(e!.Conic[k] - expected[k]), 0, 1e-7);
        }
    }

    [Fact]
    public void Fit_OfCollinearPoints_IsNull()
    {
        double[] x = [0, 1, 2, 3, 4, 5];
        Assert.Null(EllipseFit.Fit(x, x, []));
    }

    [Fact]
    public void PhaseFromPositions_WithLingeringAtTheBottleneck_IsTheRotationAngleNotTheAngleAboutTheMean()
    {
        // A rotor near onset spends most frames near its bottleneck, so the sample mean sits far from the centre.
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.02, Revolutions = 3, SamplingInterval = 0.02, Seed = 5 });
        var track = CameraView.Project(sim, 1.0, new CameraOptions { PixelNoise = 0, DropFraction = 0, YDown = false });
        var rec = new PositionRecording("r", track.Time, track.X, track.Y, [0], YDown: false);
        var (phase, orbit, _) = OrbitPhase.FromPositions(rec);
        Assert.NotNull(phase);
        Assert.Equal("counter-clockwise", orbit!.Sense);
        var mx = track.X.Average();
        var my = track.Y.Average();
        // The mean is pulled well away from the true centre (640, 360) (here by tens of pixels).
        Assert.True(Math.Abs(mx - 640) + Math.Abs(my - 360) > 20);
        // Parametric angle minus true angle is constant (projection of a circle is affine: exact up to rounding).
        var offsets = phase!.Phase.Select((p, i) => Math.IEEERemainder(p - track.Phase[i], 2 * Math.PI)).ToArray();
        Assert.InRange(offsets.Max() - offsets.Min(), 0, 1e-6);
        // The angle about the mean is not: it drifts by a large fraction of a radian.
        var aboutMean = track.X.Select((xi, i) => Math.IEEERemainder(Math.Atan2(track.Y[i] - my, xi - mx) - track.Phase[i], 2 * Math.PI)).ToArray();
        Assert.True(aboutMean.Max() - aboutMean.Min() > 0.3);
    }

    [Fact]
    public void TurningSense_WithYDown_IsReportedAsSeenOnScreen()
    {
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions { Mu = 1.3, Revolutions = 2, SamplingInterval = 0.02, Seed = 6 });
        var track = CameraView.Project(sim, 1.0, new CameraOptions { PixelNoise = 0, DropFraction = 0, YDown = true });
        // In file coordinates (rows down) the turning looks clockwise; on screen it is counter-clockwise.
        var asFile = OrbitPhase.FromPositions(new PositionRecording("r", track.Time, track.X, track.Y, [0], YDown: false));
        var onScreen = OrbitPhase.FromPositions(new PositionRecording("r", track.Time, track.X, track.Y, [0], YDown: true));
        Assert.Equal("clockwise", asFile.Orbit!.Sense);
        Assert.Equal("counter-clockwise", onScreen.Orbit!.Sense);
    }
}
