using System.Net;
using System.Runtime.InteropServices;
using System.Text;
using System.Text.RegularExpressions;
using HarfBuzzSharp;
using NormalFormFit.Reporting.Figures;
using NormalFormFit.Reporting.Html;

namespace NormalFormFit.Tests.Reporting;

/// <summary>
/// The page embeds only the glyphs it uses, and they are the whole font's: same coverage, same shaping. The reference
/// is the shipped DejaVu Sans as shaped by HarfBuzz 8.3.1 (HarfBuzzSharp 8.3.1.1, <c>Font.Shape</c>), the engine
/// browsers use; ChromiumReportTests checks the rendered pixels.
/// </summary>
public partial class EmbeddedFontTests
{
    private static readonly Lazy<string> Page = new(() =>
        HtmlReport.Build(DemoReport.Report, [.. DemoReport.Figures.Select(f => (f, f.Svg()))], new HtmlReportOptions { Source = "demo.csv" }));

    [Fact]
    public void Page_WithBothFacesEmbedded_IsUnderHalfAMegabyte()
    {
        // The two whole faces alone are 1.47 MB, 1.96 MB in base64: the page was 2.3 MB before subsetting.
        Assert.Equal(2, EmbeddedFaces(Page.Value).Count);
        Assert.InRange(Page.Value.Length, 1, 500_000);
    }

    [Fact]
    public void EmbeddedFaces_HaveAGlyphForEveryCharacterThePageShows()
    {
        var shown = WebUtility.HtmlDecode(Tag().Replace(StyleBlock().Replace(Page.Value, string.Empty), " "))
            .EnumerateRunes().Where(r => r.Value > 0x20 && !Rune.IsControl(r)).Select(r => r.Value).Distinct().ToList();
        foreach (var (bold, bytes) in EmbeddedFaces(Page.Value))
        {
            using var font = Load(bytes);
            Assert.All(shown, c => Assert.True(font.TryGetGlyph(c, out var g) && g != 0, $"U+{c:X4} missing from the {(bold ? "bold" : "regular")} face"));
        }
    }

    [Fact]
    public void EmbeddedFaces_ShapeEveryLineOfThePageAsTheWholeFontDoes()
    {
        var lines = WebUtility.HtmlDecode(Tag().Replace(StyleBlock().Replace(Page.Value, string.Empty), "\n"))
            .Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Distinct().ToList();
        Assert.True(lines.Count > 100, "the page's text");
        foreach (var (bold, bytes) in EmbeddedFaces(Page.Value))
        {
            using var whole = Load(FigureFonts.FontBytes(bold));
            using var subset = Load(bytes);
            Assert.All(lines, line => Assert.Equal(Positions(whole, line), Positions(subset, line)));
        }
    }

    [Fact]
    public void EmbeddedFaces_CarryTheFontsLicenceNotice()
    {
        // The Bitstream Vera licence (Fonts/LICENSE-DejaVu.txt) asks that its permission notice be included in all
        // copies; DejaVu Sans carries it as OpenType name ID 13 (License Description).
        foreach (var (_, bytes) in EmbeddedFaces(Page.Value))
        {
            var licence = NameRecord(bytes, 13);
            Assert.Contains("Bitstream", licence, StringComparison.Ordinal);
            Assert.Contains("Permission is hereby granted", licence, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void ShapingCheck_SeesAFontThatIsNotTheSame()
    {
        // The check above must be able to fail: the bold face shapes text differently from the regular one.
        using var regular = Load(FigureFonts.FontBytes(false));
        using var bold = Load(FigureFonts.FontBytes(true));

        Assert.NotEqual(Positions(regular, "Onset θ̇ = a + b(θ−θ*)²"), Positions(bold, "Onset θ̇ = a + b(θ−θ*)²"));
    }

    // The Windows-platform (3) record of a name ID, from the OpenType 'name' table (OpenType 1.9, "name" chapter).
    private static string NameRecord(byte[] font, int nameId)
    {
        static int U16(byte[] b, int o) => (b[o] << 8) | b[o + 1];
        static int U32(byte[] b, int o) => (U16(b, o) << 16) | U16(b, o + 2);
        var table = Enumerable.Range(0, U16(font, 4)).Select(i => 12 + (16 * i)).First(r => Encoding.ASCII.GetString(font, r, 4) == "name");
        var name = U32(font, table + 8);
        var strings = name + U16(font, name + 4);
        for (var i = 0; i < U16(font, name + 2); i++)
        {
            var rec = name + 6 + (12 * i);
            if (U16(font, rec) == 3 && U16(font, rec + 6) == nameId)
            {
                return Encoding.BigEndianUnicode.GetString(font, strings + U16(font, rec + 10), U16(font, rec + 8));
            }
        }

        return string.Empty;
    }

    internal static List<(bool Bold, byte[] Bytes)> EmbeddedFaces(string page) =>
        [.. FontFace().Matches(page).Select(m => (m.Groups[1].Value == "bold", Convert.FromBase64String(m.Groups[2].Value)))];

    private static Shaper Load(byte[] bytes) => new(bytes);

    // Advances and offsets in font units: what a browser places (glyph ids differ: the subset renumbers them).
    private static string Positions(Shaper font, string text) => font.Positions(text);

    /// <summary>
    /// A font over its own unmanaged copy of the bytes. Not Blob.FromStream: in HarfBuzzSharp 8.3.1.1 it hands HarfBuzz
    /// a pointer into a managed array that is not pinned, which the garbage collector may move (seen here as shaping
    /// garbage in long runs).
    /// </summary>
    private sealed class Shaper : IDisposable
    {
        private readonly Blob blob;
        private Face? face;
        private HarfBuzzSharp.Font? font;

        public Shaper(byte[] bytes)
        {
            var copy = Marshal.AllocHGlobal(bytes.Length);
            Marshal.Copy(bytes, 0, copy, bytes.Length);
            blob = new Blob(copy, bytes.Length, MemoryMode.ReadOnly, () => Marshal.FreeHGlobal(copy));
        }

        private HarfBuzzSharp.Font Font => font ??= new HarfBuzzSharp.Font(face ??= new Face(blob, 0));

        public bool TryGetGlyph(int codePoint, out uint glyph) => Font.TryGetGlyph(codePoint, out glyph);

        public string Positions(string text)
        {
            using var buffer = new HarfBuzzSharp.Buffer();
            buffer.AddUtf16(text);
            buffer.GuessSegmentProperties();
            Font.Shape(buffer);
            return string.Join(' ', buffer.GlyphPositions.Select(p => $"{p.XAdvance},{p.YAdvance},{p.XOffset},{p.YOffset}"));
        }

        public void Dispose()
        {
            font?.Dispose();
            face?.Dispose();
            blob.Dispose();
        }
    }

    [GeneratedRegex("@font-face\\{[^}]*font-weight:(bold|normal);src:url\\(data:font/ttf;base64,([^)]*)\\)")]
    private static partial Regex FontFace();

    [GeneratedRegex("<style>.*?</style>", RegexOptions.Singleline)]
    private static partial Regex StyleBlock();

    [GeneratedRegex("<[^>]+>")]
    private static partial Regex Tag();
}
