using System.Buffers.Binary;
using System.Xml.Linq;
using NormalFormFit.Reporting.Figures;
using SkiaSharp;

namespace NormalFormFit.Tests.Reporting;

public class FigureFileTests
{
    private static readonly byte[] PngSignature = [0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A];

    [Fact]
    public void Figures_ForDemoData_AreTheSevenTheReportPromises()
    {
        var names = DemoReport.Figures.Select(f => f.Name).ToArray();

        // The list of figures is the report's own specification (fields, a, T⁻², the onsets close up, scaling,
        // periods, residuals; the orbits only for positions).
        Assert.Equal(["field", "trend-a", "trend-period", "onsets", "scaling", "periods", "residuals"], names);
    }

    [Fact]
    public void EveryFigure_AsPng_HasTheSignatureTheSizeAskedForAndVisibleInk()
    {
        foreach (var f in DemoReport.Figures)
        {
            var png = f.Png();

            // PNG specification (W3C/ISO 15948 §5.2): the 8-byte signature, then IHDR with big-endian width and height.
            Assert.Equal(PngSignature, png[..8]);
            Assert.Equal("IHDR", System.Text.Encoding.ASCII.GetString(png, 12, 4));
            Assert.Equal(f.Width, BinaryPrimitives.ReadInt32BigEndian(png.AsSpan(16, 4)));
            Assert.Equal(f.Height, BinaryPrimitives.ReadInt32BigEndian(png.AsSpan(20, 4)));

            // Not blank: a plot with axes, text and data darkens well over 1% of its pixels (common practice, no
            // source: an empty white canvas has none, a frame alone about 0.5%).
            using var bitmap = SKBitmap.Decode(png);
            Assert.True(DarkFraction(bitmap) > 0.01, $"{f.Name}.png looks blank");
        }
    }

    [Fact]
    public void EveryFigure_AsSvg_IsWellFormedScalableAndDrawsItsTextWithTheShippedFont()
    {
        foreach (var f in DemoReport.Figures)
        {
            // Well formed per XML 1.0 (XDocument.Parse throws otherwise); root element per SVG 1.1 §5.1.
            var doc = XDocument.Parse(f.Svg());
            XNamespace svg = "http://www.w3.org/2000/svg";
            Assert.Equal(svg + "svg", doc.Root!.Name);
            Assert.Equal($"0 0 {f.Width} {f.Height}", (string?)doc.Root.Attribute("viewBox"));

            // Text is drawn (title and both axis labels at least), all of it in the shipped family.
            var texts = doc.Descendants(svg + "text").ToList();
            Assert.True(texts.Count >= 3, $"{f.Name}.svg has {texts.Count} text elements");
            Assert.All(texts, t => Assert.Equal(FigureFonts.Family, (string?)t.Attribute("font-family")));
            Assert.Contains(texts, t => t.Value.Contains(f.Plot.Axes.Title.Label.Text, StringComparison.Ordinal));
        }
    }

    [Fact]
    public void ParameterAxes_CarryTheUnitsFromTheManifest()
    {
        var trend = DemoReport.Figures.Single(f => f.Name == "trend-a");

        Assert.Contains("(mA)", trend.Svg(), StringComparison.Ordinal);
    }

    [Fact]
    public void Palette_RunColours_GrowLighterWithTheParameter_SoTheyStayOrderedInGreyscale()
    {
        // Relative luminance weights of ITU-R BT.709 (as in WCAG 2.x): the greyscale a reader or printer sees.
        static double Luma(ScottPlot.Color c) => (0.2126 * c.R) + (0.7152 * c.G) + (0.0722 * c.B);
        var lumas = Enumerable.Range(0, 9).Select(i => Luma(FigurePalette.Run(i, 9))).ToArray();
        for (var i = 1; i < lumas.Length; i++)
        {
            Assert.True(lumas[i] > lumas[i - 1], $"run colour {i} is not lighter than run colour {i - 1}");
        }

        // The two route colours differ in lightness by at least a fifth of the scale (common practice, no source).
        Assert.True(Math.Abs(Luma(FigurePalette.Bottleneck) - Luma(FigurePalette.Period)) > 50);
    }

    private static double DarkFraction(SKBitmap bitmap)
    {
        var dark = 0L;
        for (var y = 0; y < bitmap.Height; y += 2)
        {
            for (var x = 0; x < bitmap.Width; x += 2)
            {
                var c = bitmap.GetPixel(x, y);
                if (c.Red + c.Green + c.Blue < 3 * 200)
                {
                    dark++;
                }
            }
        }

        return dark / (double)((bitmap.Height + 1) / 2 * ((bitmap.Width + 1) / 2));
    }
}
