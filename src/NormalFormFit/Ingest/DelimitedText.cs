using System.Buffers;
using System.Globalization;
using System.Text;

namespace NormalFormFit.Ingest;

/// <summary>Field separator of a delimited text file.</summary>
public enum Delimiter
{
    /// <summary>Detect from the header line: tab, then semicolon, then comma, else runs of blanks.</summary>
    Auto,

    /// <summary>Comma.</summary>
    Comma,

    /// <summary>Semicolon.</summary>
    Semicolon,

    /// <summary>Tab.</summary>
    Tab,

    /// <summary>One or more spaces or tabs.</summary>
    Whitespace,
}

/// <summary>
/// Streams a delimited text file as UTF-8 bytes, one record at a time, without building strings for the
/// data lines. Skips blank lines and lines whose first non-blank character is <c>#</c>; accepts LF and
/// CRLF line ends and a UTF-8 byte-order mark. Fields are trimmed of blanks. With a comma, semicolon or tab
/// separator a field may be quoted as in RFC 4180 §2 (separators inside, <c>""</c> for a quote), within one
/// line. Cost O(file size), memory one buffer of the longest line: lines longer than <see cref="MaxLineBytes"/>
/// end the reading (<see cref="Read"/> returns false and <see cref="TooLong"/> says why), so that a file without
/// line ends (binary data, CR-only line ends) cannot take unbounded memory.
/// </summary>
internal sealed class DelimitedTextReader : IDisposable
{
    /// <summary>Longest line read, in bytes (1 MiB: a sample line is tens of bytes; a header of thousands of columns fits).</summary>
    public const int MaxLineBytes = 1 << 20;

    private const int ChunkSize = 1 << 16;
    private readonly Stream _stream;
    private byte[] _buffer = ArrayPool<byte>.Shared.Rent(ChunkSize * 2);
    private int _start;
    private int _end;
    private bool _eof;
    private bool _first = true;
    private int[] _fieldStarts = new int[16];
    private int[] _fieldEnds = new int[16];
    private bool[] _fieldQuoted = new bool[16];
    private int _lineOffset;
    private int _lineLength;

    public DelimitedTextReader(Stream stream, Delimiter delimiter)
    {
        _stream = stream;
        Delimiter = delimiter;
    }

    /// <summary>The delimiter in use; resolved from <see cref="Delimiter.Auto"/> at the first record.</summary>
    public Delimiter Delimiter { get; private set; }

    /// <summary>Set when reading stopped at a line longer than <see cref="MaxLineBytes"/>; null otherwise.</summary>
    public LineTooLong? TooLong { get; private set; }

    /// <summary>1-based number of the line last returned.</summary>
    public int LineNumber { get; private set; }

    /// <summary>Number of fields of the record last read.</summary>
    public int FieldCount { get; private set; }

    /// <summary>The raw text of the current line (without line end).</summary>
    public ReadOnlySpan<byte> Line => _buffer.AsSpan(_lineOffset, _lineLength);

    /// <summary>Field <paramref name="i"/> of the current record, trimmed.</summary>
    public ReadOnlySpan<byte> Field(int i) => Line[_fieldStarts[i].._fieldEnds[i]];

    /// <summary>1-based column (character position) at which field <paramref name="i"/> starts.</summary>
    public int ColumnOf(int i) => Encoding.UTF8.GetCharCount(Line[.._fieldStarts[i]]) + 1;

    /// <summary>Field <paramref name="i"/> as a string (for headers and messages), a quoted field's <c>""</c> as one quote.</summary>
    public string FieldText(int i)
    {
        var text = Encoding.UTF8.GetString(Field(i));
        return _fieldQuoted[i] ? text.Replace("\"\"", "\"", StringComparison.Ordinal) : text;
    }

    /// <summary>True when the line holds a byte that never appears in text (NUL or other C0 controls but tab).</summary>
    public bool LineLooksBinary()
    {
        foreach (var c in Line)
        {
            if (c < 0x20 && c != (byte)'\t' && c != (byte)'\r')
            {
                return true;
            }
        }

        return !System.Text.Unicode.Utf8.IsValid(Line);
    }

    /// <summary>
    /// The error for <see cref="TooLong"/>, naming <paramref name="name"/>, the line and the column where the limit was
    /// passed; <paramref name="expected"/> says what the file should hold.
    /// </summary>
    public Diagnostic TooLongError(string name, string expected)
    {
        var t = TooLong ?? throw new InvalidOperationException("No line was too long.");
        var what = t.LooksBinary
            ? "the file is not text (a line longer than 1 MiB with control bytes or invalid UTF-8)"
            : "the line is longer than 1 MiB (1 048 576 bytes) without a line end";
        var fix = t.LooksBinary ? "export the recording as text"
            : t.CarriageReturns ? "its lines seem to end in CR alone: convert the line ends to LF or CRLF"
            : "check that this is the right file and that its lines end in LF or CRLF";
        return new Diagnostic(Severity.Error, "line-too-long", $"{what}; expected {expected}: {fix}", name, t.Line, t.Column);
    }

    /// <summary>Reads the next non-blank, non-comment line and splits it. False at the end of the file or at a line too long.</summary>
    public bool Read()
    {
        while (NextLine())
        {
            var line = Line;
            var trimmed = line.Trim((byte)' ').Trim((byte)'\t');
            if (trimmed.IsEmpty || trimmed[0] == (byte)'#')
            {
                continue;
            }

            if (Delimiter == Delimiter.Auto)
            {
                Delimiter = Detect(line);
            }

            Split(line);
            return true;
        }

        return false;
    }

    private static Delimiter Detect(ReadOnlySpan<byte> line) =>
        line.Contains((byte)'\t') && !line.Contains((byte)',') && !line.Contains((byte)';') ? Delimiter.Tab
        : line.Contains((byte)';') ? Delimiter.Semicolon
        : line.Contains((byte)',') ? Delimiter.Comma
        : Delimiter.Whitespace;

    private void Split(ReadOnlySpan<byte> line)
    {
        var count = 0;
        if (Delimiter == Delimiter.Whitespace)
        {
            var i = 0;
            while (i < line.Length)
            {
                while (i < line.Length && IsBlank(line[i]))
                {
                    i++;
                }

                if (i == line.Length)
                {
                    break;
                }

                var s = i;
                while (i < line.Length && !IsBlank(line[i]))
                {
                    i++;
                }

                Add(ref count, s, i);
            }
        }
        else
        {
            var sep = Delimiter switch
            {
                Delimiter.Comma => (byte)',',
                Delimiter.Semicolon => (byte)';',
                _ => (byte)'\t',
            };
            var s = 0;
            while (true)
            {
                var next = QuotedField(line, s, sep, out var close);
                if (next >= 0)
                {
                    Add(ref count, line[s..].IndexOf((byte)'"') + s + 1, close, quoted: true);
                    if (next > line.Length)
                    {
                        break;
                    }

                    s = next;
                    continue;
                }

                var k = line[s..].IndexOf(sep);
                var e = k < 0 ? line.Length : s + k;
                var (a, b) = TrimRange(line, s, e);
                Add(ref count, a, b);
                if (k < 0)
                {
                    break;
                }

                s = e + 1;
            }
        }

        FieldCount = count;
    }

    /// <summary>
    /// When the field at <paramref name="s"/> is a well-formed quoted field (blanks, '"', text with '""' for a quote,
    /// '"', blanks, then the separator or the line end): the start of the next field (past the line end for the last
    /// field) and, in <paramref name="close"/>, the position of the closing quote. Otherwise −1: read as unquoted.
    /// </summary>
    private static int QuotedField(ReadOnlySpan<byte> line, int s, byte sep, out int close)
    {
        close = -1;
        var p = s;
        while (p < line.Length && IsBlank(line[p]))
        {
            p++;
        }

        if (p == line.Length || line[p] != (byte)'"')
        {
            return -1;
        }

        var q = p + 1;
        while (true)
        {
            var k = line[q..].IndexOf((byte)'"');
            if (k < 0)
            {
                return -1;
            }

            q += k;
            if (q + 1 < line.Length && line[q + 1] == (byte)'"')
            {
                q += 2;
                continue;
            }

            break;
        }

        var after = q + 1;
        while (after < line.Length && IsBlank(line[after]))
        {
            after++;
        }

        if (after < line.Length && line[after] != sep)
        {
            return -1;
        }

        close = q;
        return after + 1;
    }

    private static (int Start, int End) TrimRange(ReadOnlySpan<byte> line, int s, int e)
    {
        while (s < e && IsBlank(line[s]))
        {
            s++;
        }

        while (e > s && IsBlank(line[e - 1]))
        {
            e--;
        }

        return (s, e);
    }

    private static bool IsBlank(byte b) => b == (byte)' ' || b == (byte)'\t';

    private void Add(ref int count, int s, int e, bool quoted = false)
    {
        if (count == _fieldStarts.Length)
        {
            Array.Resize(ref _fieldStarts, count * 2);
            Array.Resize(ref _fieldEnds, count * 2);
            Array.Resize(ref _fieldQuoted, count * 2);
        }

        _fieldStarts[count] = s;
        _fieldEnds[count] = e;
        _fieldQuoted[count] = quoted;
        count++;
    }

    private bool NextLine()
    {
        while (true)
        {
            var available = _buffer.AsSpan(_start, _end - _start);
            var nl = available.IndexOf((byte)'\n');
            if (nl > MaxLineBytes || (nl < 0 && available.Length > MaxLineBytes))
            {
                TooLong = LineTooLong.From(LineNumber + 1, available, _first);
                return false;
            }

            if (nl >= 0 || (_eof && available.Length > 0))
            {
                var len = nl >= 0 ? nl : available.Length;
                _lineOffset = _start;
                _lineLength = len;
                if (len > 0 && available[len - 1] == (byte)'\r')
                {
                    _lineLength--;
                }

                if (_first)
                {
                    _first = false;
                    if (Line.StartsWith("\uFEFF"u8))
                    {
                        _lineOffset += 3;
                        _lineLength -= 3;
                    }
                }

                _start += nl >= 0 ? nl + 1 : available.Length;
                LineNumber++;
                return true;
            }

            if (_eof)
            {
                return false;
            }

            Fill();
        }
    }

    private void Fill()
    {
        var pending = _end - _start;
        if (pending > 0 && _start > 0)
        {
            Buffer.BlockCopy(_buffer, _start, _buffer, 0, pending);
        }

        _start = 0;
        _end = pending;
        if (_buffer.Length - _end < ChunkSize)
        {
            var bigger = ArrayPool<byte>.Shared.Rent(_buffer.Length * 2);
            Buffer.BlockCopy(_buffer, 0, bigger, 0, _end);
            ArrayPool<byte>.Shared.Return(_buffer);
            _buffer = bigger;
        }

        var n = _stream.Read(_buffer, _end, _buffer.Length - _end);
        if (n == 0)
        {
            _eof = true;
        }

        _end += n;
    }

    /// <summary>Parses an invariant-culture floating-point number (or one with a decimal comma).</summary>
    public static bool TryParseNumber(ReadOnlySpan<byte> field, bool decimalComma, out double value)
    {
        if (decimalComma && field.Contains((byte)','))
        {
            Span<byte> copy = stackalloc byte[Math.Min(field.Length, 128)];
            if (field.Length > copy.Length)
            {
                value = double.NaN;
                return false;
            }

            field.CopyTo(copy);
            copy.Replace((byte)',', (byte)'.');
            return double.TryParse(copy, NumberStyles.Float, CultureInfo.InvariantCulture, out value);
        }

        return double.TryParse(field, NumberStyles.Float, CultureInfo.InvariantCulture, out value);
    }

    /// <summary>True for the spellings of a missing value: empty, NaN, NA, null.</summary>
    public static bool IsMissing(ReadOnlySpan<byte> field) =>
        field.IsEmpty
        || Ascii.EqualsIgnoreCase(field, "nan"u8)
        || Ascii.EqualsIgnoreCase(field, "na"u8)
        || Ascii.EqualsIgnoreCase(field, "null"u8);

    public void Dispose()
    {
        ArrayPool<byte>.Shared.Return(_buffer);
        _buffer = [];
    }
}

/// <summary>Where and what a line longer than <see cref="DelimitedTextReader.MaxLineBytes"/> was.</summary>
/// <param name="Line">1-based line number.</param>
/// <param name="Column">1-based column (character position) of the first byte beyond the limit.</param>
/// <param name="LooksBinary">The first MiB holds control bytes or invalid UTF-8.</param>
/// <param name="CarriageReturns">The first MiB holds CR bytes (a file with CR-only line ends reads as one line).</param>
internal sealed record LineTooLong(int Line, int Column, bool LooksBinary, bool CarriageReturns)
{
    /// <summary>Describes the line that starts <paramref name="text"/>, which has more than the limit's bytes.</summary>
    public static LineTooLong From(int line, ReadOnlySpan<byte> text, bool firstLine)
    {
        // Back to a character boundary, so that a character cut by the limit does not count as invalid UTF-8.
        var end = DelimitedTextReader.MaxLineBytes;
        while (end > 0 && (text[end] & 0xC0) == 0x80)
        {
            end--;
        }

        var head = text[..end];
        if (firstLine && head.StartsWith("\uFEFF"u8))
        {
            head = head[3..];
        }

        var control = false;
        foreach (var c in head)
        {
            control |= c < 0x20 && c != (byte)'\t' && c != (byte)'\r';
        }

        var binary = control || !System.Text.Unicode.Utf8.IsValid(head);
        return new LineTooLong(line, Encoding.UTF8.GetCharCount(head) + 1, binary, head.Contains((byte)'\r'));
    }
}
