using System.Reflection;
using ScottPlot;
using SkiaSharp;

namespace NormalFormFit.Reporting.Figures;

/// <summary>
/// The one typeface of every figure: DejaVu Sans regular and bold, shipped inside the assembly (Bitstream Vera
/// licence, redistributable; see Fonts/LICENSE-DejaVu.txt). Without fonts on the system the plotting library
/// silently draws no text; with these registered, figures look the same on every machine.
/// </summary>
public static class FigureFonts
{
    /// <summary>Family name used by every figure (the name inside the TTF, which SVG text refers to).</summary>
    public const string Family = "DejaVu Sans";

    private static readonly Lock Gate = new();
    private static bool registered;

    /// <summary>Registers the shipped typefaces with the plotting library and makes them the default (idempotent).</summary>
    public static void Register()
    {
        lock (Gate)
        {
            if (registered)
            {
                return;
            }

            var regular = Load("NormalFormFit.Fonts.DejaVuSans.ttf");
            var bold = Load("NormalFormFit.Fonts.DejaVuSans-Bold.ttf");
            Fonts.FontResolvers.Insert(0, new EmbeddedFontResolver(regular, bold));
            Fonts.Default = Family;
            registered = true;
        }
    }

    /// <summary>The raw bytes of the regular (false) or bold (true) face, for embedding in documents.</summary>
    public static byte[] FontBytes(bool bold)
    {
        using var s = Resource(bold ? "NormalFormFit.Fonts.DejaVuSans-Bold.ttf" : "NormalFormFit.Fonts.DejaVuSans.ttf");
        using var m = new MemoryStream();
        s.CopyTo(m);
        return m.ToArray();
    }

    private static SKData Load(string name)
    {
        using var s = Resource(name);
        return SKData.Create(s);
    }

    private static Stream Resource(string name) =>
        Assembly.GetExecutingAssembly().GetManifestResourceStream(name)
        ?? throw new InvalidOperationException($"embedded font {name} is missing from the assembly (build error)");

    /// <summary>Answers requests for <see cref="Family"/> (and for any family, as the last resort) with the shipped faces.</summary>
    private sealed class EmbeddedFontResolver(SKData regular, SKData bold) : IFontResolver
    {
        public SKTypeface? CreateTypeface(string fontName, FontWeight weight, FontSlant slant, FontSpacing spacing) =>
            CreateTypeface(fontName, weight >= FontWeight.SemiBold, slant != FontSlant.Upright);

        public SKTypeface? CreateTypeface(string fontName, bool bold, bool italic) =>
            SKTypeface.FromData(bold ? this.bold : regular);

        private readonly SKData bold = bold;
    }
}
