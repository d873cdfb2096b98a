using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Cli;

/// <summary>docs/data-safety.md, clause 9: what reaches the terminal cannot act on it or hide from it.</summary>
public class SafeTextTests
{
    [Theory]
    [InlineData("\u001b[31mred", "\\e[31mred")]
    [InlineData("bell\u0007", "bell\\a")]
    [InlineData("a\rb", "a\\rb")]
    [InlineData("nul\0", "nul\\u0000")]
    [InlineData("c1\u009b", "c1\\u009B")]
    [InlineData("zero\u200Bwidth", "zero\\u200Bwidth")]
    [InlineData("rlo\u202Eevil", "rlo\\u202Eevil")]
    [InlineData("joiner\u2060", "joiner\\u2060")]
    [InlineData("\uFEFFbom", "\\uFEFFbom")]
    [InlineData("tab\tkept, μ and θ kept", "tab\tkept, μ and θ kept")]
    public void EscapeAll_ShowsControlAndInvisibleCharactersAsEscapes(string raw, string shown) =>
        Assert.Equal(shown, SafeText.EscapeAll(raw));

    [Fact]
    public void Line_ShortensALongQuotedEcho_KeepingThePlaceAndTheAdvice()
    {
        var echo = new string('x', 5000);
        var line = SafeText.Line($"m.csv:2:7: error: expected a number, found '{echo}' (use a decimal point)");

        Assert.StartsWith("m.csv:2:7: error: expected a number, found '", line, StringComparison.Ordinal);
        Assert.EndsWith("' (use a decimal point)", line, StringComparison.Ordinal);
        Assert.Contains("…", line, StringComparison.Ordinal);
        Assert.True(line.Length < 150, line);
    }

    [Fact]
    public void MessageWriter_EscapesEverythingButTheLineEnds()
    {
        using var inner = new StringWriter();
        using (var w = new SafeMessageWriter(inner))
        {
            w.WriteLine("nffit: \u001b]0;title\u0007.csv: error");
            w.Write("second\rline");
            w.WriteLine();
        }

        Assert.Equal("nffit: \\e]0;title\\a.csv: error\nsecond\\rline\n", inner.ToString().Replace("\r\n", "\n", StringComparison.Ordinal));
    }
}
