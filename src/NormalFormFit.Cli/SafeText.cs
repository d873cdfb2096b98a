using System.Globalization;
using System.Text;

namespace NormalFormFit.Cli;

/// <summary>
/// Makes text safe to echo on a terminal (docs/data-safety.md, clause 9): control characters and invisible code
/// points are shown as escapes, so a file name or a field cannot move the cursor, set the title or colours, or hide
/// itself; quoted echoes longer than <see cref="MaxEcho"/> characters are shortened around their middle with "…".
/// </summary>
internal static class SafeText
{
    /// <summary>Longest quoted echo ('…') kept whole in a message; longer ones keep their start and end.</summary>
    public const int MaxEcho = 60;

    /// <summary>Longest message line; a longer one keeps its start (which names the place) and its end.</summary>
    public const int MaxLine = 2000;

    /// <summary>
    /// Escapes one character: ESC → <c>\e</c>, BEL → <c>\a</c>, CR → <c>\r</c>, tab kept; other C0 and C1 controls, DEL,
    /// U+200B–U+200F, U+202A–U+202E, U+2060–U+2064 and U+FEFF → <c>\uXXXX</c> (<see cref="EscapeAll"/> adds lone surrogates).
    /// Null when the character is shown as it is.
    /// </summary>
    public static string? Escape(char c) => c switch
    {
        '\t' => null,
        '\u001B' => "\\e",
        '\u0007' => "\\a",
        '\r' => "\\r",
        '\n' => "\\n",
        < ' ' or '\u007F' or (>= '\u0080' and <= '\u009F') => Hex(c),
        (>= '\u200B' and <= '\u200F') or (>= '\u202A' and <= '\u202E') or (>= '\u2060' and <= '\u2064') or '\uFEFF' => Hex(c),
        _ => null,
    };

    /// <summary>One line of a message made safe: escapes (<see cref="Escape"/>), long echoes and long lines shortened.</summary>
    public static string Line(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var escaped = EscapeAll(text);
        var shortened = ShortenEchoes(escaped);
        if (shortened.Length > MaxLine)
        {
            var keep = (MaxLine / 2) - 1;
            shortened = string.Concat(shortened.AsSpan(0, keep), "…", shortened.AsSpan(shortened.Length - keep));
        }

        return shortened;
    }

    /// <summary>Every character through <see cref="Escape"/>; lone surrogates as <c>\uXXXX</c> too.</summary>
    public static string EscapeAll(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        StringBuilder? sb = null;
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            var e = Escape(c);
            if (e is null && char.IsSurrogate(c))
            {
                var paired = char.IsHighSurrogate(c) ? i + 1 < text.Length && char.IsLowSurrogate(text[i + 1])
                    : i > 0 && char.IsHighSurrogate(text[i - 1]);
                e = paired ? null : Hex(c);
            }

            if (e is not null)
            {
                sb ??= new StringBuilder(text, 0, i, text.Length + 16);
                sb.Append(e);
            }
            else
            {
                sb?.Append(c);
            }
        }

        return sb?.ToString() ?? text;
    }

    /// <summary>
    /// Shortens every quoted echo ('…' between single quotes) longer than <see cref="MaxEcho"/> characters to its first
    /// and last characters around "…", so that the place named before it and the advice after it stay readable.
    /// </summary>
    public static string ShortenEchoes(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        var sb = new StringBuilder(Math.Min(text.Length, 4 * MaxLine));
        var i = 0;
        while (i < text.Length)
        {
            var open = text.IndexOf('\'', i);
            if (open < 0)
            {
                sb.Append(text, i, text.Length - i);
                break;
            }

            var close = text.IndexOf('\'', open + 1);
            if (close < 0)
            {
                sb.Append(text, i, text.Length - i);
                break;
            }

            sb.Append(text, i, open + 1 - i);
            var inner = text.AsSpan(open + 1, close - open - 1);
            if (inner.Length > MaxEcho)
            {
                var half = (MaxEcho / 2) - 1;
                sb.Append(inner[..half]).Append('…').Append(inner[^half..]);
            }
            else
            {
                sb.Append(inner);
            }

            sb.Append('\'');
            i = close + 1;
        }

        return sb.ToString();
    }

    private static string Hex(char c) => "\\u" + ((int)c).ToString("X4", CultureInfo.InvariantCulture);
}

/// <summary>
/// The one place the command line writes messages: every line written to standard error passes through
/// <see cref="SafeText.Line"/>. Writes are collected until a line ends, so a message split over several writes is
/// made safe as a whole. The progress display writes to <see cref="Inner"/> directly (its CR redraws are ours).
/// </summary>
internal sealed class SafeMessageWriter(TextWriter inner) : TextWriter
{
    private readonly StringBuilder pending = new();

    /// <summary>The writer underneath, for the progress display.</summary>
    public TextWriter Inner { get; } = inner;

    public override Encoding Encoding => Inner.Encoding;

    public override void Write(char value)
    {
        lock (pending)
        {
            if (value == '\n')
            {
                EmitPending();
                return;
            }

            pending.Append(value);
        }
    }

    public override void Write(string? value)
    {
        if (value is null)
        {
            return;
        }

        lock (pending)
        {
            foreach (var c in value)
            {
                if (c == '\n')
                {
                    EmitPending();
                }
                else
                {
                    pending.Append(c);
                }
            }
        }
    }

    public override void WriteLine(string? value)
    {
        lock (pending)
        {
            Write(value);
            EmitPending();
        }
    }

    public override void WriteLine() => Write('\n');

    public override void Flush()
    {
        lock (pending)
        {
            if (pending.Length > 0)
            {
                Inner.Write(SafeText.Line(pending.ToString()));
                pending.Clear();
            }

            Inner.Flush();
        }
    }

    protected override void Dispose(bool disposing)
    {
        if (disposing)
        {
            Flush();
        }

        base.Dispose(disposing);
    }

    private void EmitPending()
    {
        // A CRLF line end written by the platform's WriteLine is one line end, not an echoed CR.
        if (pending.Length > 0 && pending[^1] == '\r')
        {
            pending.Length--;
        }

        Inner.WriteLine(SafeText.Line(pending.ToString()));
        pending.Clear();
    }
}
