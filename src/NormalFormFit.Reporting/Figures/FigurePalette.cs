using ScottPlot;

namespace NormalFormFit.Reporting.Figures;

/// <summary>
/// Colours of the figures. Categorical colours differ in lightness as well as hue (dark ink, blue, amber), so
/// they stay apart in greyscale and for red–green colour-blind readers, and every series also differs by
/// marker shape or line pattern. Runs are coloured along a ramp whose lightness rises with μ (deep navy →
/// teal → ochre): ordered in greyscale, and free of red–green contrast. Our own choice of colours.
/// </summary>
public static class FigurePalette
{
    /// <summary>Measured values and reference lines.</summary>
    public static Color Ink { get; } = Color.FromHex("#1E1E24");

    /// <summary>The bottleneck route (a → 0) and everything from the bottleneck fit.</summary>
    public static Color Bottleneck { get; } = Color.FromHex("#1F5AA6");

    /// <summary>The period route (T⁻² → 0) and everything from periods.</summary>
    public static Color Period { get; } = Color.FromHex("#E08A1E");

    /// <summary>Rejected samples (positions dropped as off the orbit).</summary>
    public static Color Rejected { get; } = Color.FromHex("#A3322A");

    /// <summary>
    /// A fitted reduced model drawn against the runs: plum, a hue no run, route or rejected point takes, and darker
    /// than the ramp's light end, so its dashes stand apart from every run's markers.
    /// </summary>
    public static Color Model { get; } = Color.FromHex("#9B2C7C");

    /// <summary>Reference laws (slope −½, identity line).</summary>
    public static Color Reference { get; } = Color.FromHex("#7A7A80");

    private static readonly (double R, double G, double B)[] Ramp =
    [
        (0x1B, 0x24, 0x4A),
        (0x24, 0x5E, 0x86),
        (0x2A, 0x8C, 0x86),
        (0x7E, 0x9A, 0x3E),
        (0xDA, 0xA5, 0x20),
    ];

    /// <summary>The colour of run <paramref name="index"/> of <paramref name="count"/> (ordered by μ).</summary>
    public static Color Run(int index, int count)
    {
        var f = count <= 1 ? 0.0 : (double)index / (count - 1);
        var x = f * (Ramp.Length - 1);
        var k = Math.Min((int)x, Ramp.Length - 2);
        var u = x - k;
        byte Mix(double lo, double hi) => (byte)Math.Round(lo + ((hi - lo) * u));
        return new Color(Mix(Ramp[k].R, Ramp[k + 1].R), Mix(Ramp[k].G, Ramp[k + 1].G), Mix(Ramp[k].B, Ramp[k + 1].B));
    }
}
