using NormalFormFit.Analysis;
using NormalFormFit.Ingest;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// What the orbit figure of a single signal draws (<see cref="SignalOrbitView"/>), checked on the theta neuron
/// θ̇ = (1 − cos θ) + (1 + cos θ) I (Ermentrout &amp; Kopell 1986, SIAM J. Appl. Math. 46:233), whose solution for
/// I &gt; 0 is tan(θ/2) = √I tan(√I t), recorded as s = sin θ: the delay-embedded orbit (s(t), s(t − τ)) is known
/// exactly, and the bottleneck θ = 0 sits at s = 0 where the signal lingers, so s(t − τ) ≈ 0 there too.
/// </summary>
public class SignalOrbitViewTests
{
    private const double Step = 0.01;
    private const int Cycles = 16;

    private static readonly RunOptions WithProtophase = new() { SignalEvents = new SignalEventOptions { Protophase = true } };

    /// <summary>s = sin θ(t) written without the poles of tan: 2√I sin x cos x/(cos²x + I sin²x), x = √I t.</summary>
    private static double Exact(double t, double current)
    {
        var period = Math.PI / Math.Sqrt(current);
        var (sin, cos) = Math.SinCos(Math.Sqrt(current) * (t + (0.3 * period)));
        return 2 * Math.Sqrt(current) * sin * cos / ((cos * cos) + (current * sin * sin));
    }

    private static RunResult Run(double current, double noise, int seed, RunOptions options)
    {
        var n = (int)(Cycles * Math.PI / Math.Sqrt(current) / Step);
        var random = new Random(seed);
        var t = new double[n];
        var s = new double[n];
        for (var k = 0; k < n; k++)
        {
            t[k] = k * Step;
            s[k] = Exact(t[k], current) + (noise * Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble()));
        }

        var recording = new SignalRecording("theta.csv", t, s, [0]) { SignalColumnName = "signal", TimeUnit = "s" };
        return RecordingAnalyzer.Analyze(recording, current, $"theta_{current}.csv", null, options, []).Value!;
    }

    [Fact]
    public void TheMeanOrbit_LiesOnTheExactDelayEmbeddedOrbit_AndTheBottleneckAtTheSlowPointOfTheSignal()
    {
        const double current = 0.01;
        var run = Run(current, 0.01, 3, WithProtophase);
        var view = run.SignalOrbitView;

        Assert.NotNull(view);
        Assert.Equal(run.SignalOrbit!.Delay, view!.Delay);
        Assert.Equal(0, view.LeftOut);
        Assert.InRange(view.X.Length, 1, SignalOrbitView.MaxDrawn);

        // The exact orbit, densely: (s(t), s(t − τ)) over one period.
        var tau = view.Delay;
        var period = Math.PI / Math.Sqrt(current);
        var exact = Enumerable.Range(0, 20000).Select(k => k * period / 20000).Select(t => (X: Exact(t + tau, current), Y: Exact(t, current))).ToArray();
        double Distance(double x, double y) => exact.Min(p => Math.Sqrt(((p.X - x) * (p.X - x)) + ((p.Y - y) * (p.Y - y))));

        // Every point of the mean orbit within 0.05 of the exact orbit (amplitude 1, noise 0.01 per sample).
        Assert.True(view.MeanX.Length > 0.9 * SignalOrbitView.MeanBins);
        var worst = view.MeanX.Zip(view.MeanY, Distance).Max();
        Assert.InRange(worst, 0, 0.05);

        // The bottleneck: θ = 0, where s = sin θ = 0 and the signal lingers, so s(t − τ) ≈ 0 as well.
        Assert.InRange(view.BottleneckX, -0.15, 0.15);
        Assert.InRange(view.BottleneckY, -0.15, 0.15);
    }

    [Fact]
    public void WithoutTheProtophase_ThereIsNoOrbitView_AndThePageSaysWhyInOneLine()
    {
        double[] currents = [0.01, 0.014, 0.02];
        var without = OnsetAnalysis.Combine([.. currents.Select((c, k) => Run(c, 0.01, 10 + k, RunOptions.Default))]);
        Assert.All(without.Runs, r => Assert.Null(r.SignalOrbitView));
        Assert.DoesNotContain(ReportFigures.Build(without), f => f.Name == "signal-orbits");
        var why = HtmlReport.NoSignalOrbit(without);
        Assert.NotNull(why);
        Assert.Contains("--signal-protophase", why, StringComparison.Ordinal);

        var with = OnsetAnalysis.Combine([.. currents.Select((c, k) => Run(c, 0.01, 10 + k, WithProtophase))]);
        Assert.Null(HtmlReport.NoSignalOrbit(with));
        var figure = Assert.Single(ReportFigures.Build(with), f => f.Name == "signal-orbits");
        Assert.Contains("'signal'", figure.Caption, StringComparison.Ordinal);
        Assert.StartsWith("\u0089PNG", System.Text.Encoding.Latin1.GetString(figure.Png(), 0, 4), StringComparison.Ordinal);

        // The figure draws the orbits: ink and colours (the blue mean orbit, the amber bottleneck), not an empty frame.
        using var bitmap = SkiaSharp.SKBitmap.Decode(figure.Png());
        var (dark, colours, blue) = NormalFormFit.Tests.Reporting.Chromium.Ink(bitmap);
        Assert.True(dark > 0.005, $"only {dark:P2} of the figure is ink");
        Assert.True(colours > 20, $"only {colours} distinct colours");
        Assert.True(blue, "no blue (the mean orbit) in the figure");
    }
}
