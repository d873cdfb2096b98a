using System.Text.RegularExpressions;

namespace NormalFormFit.Tests.Architecture;

/// <summary>A reference from a source file to a namespace of the program, with where it stands.</summary>
/// <param name="File">Path relative to the repository.</param>
/// <param name="Line">1-based line.</param>
/// <param name="Namespace">The referring file's namespace, e.g. <c>NormalFormFit.Numerics</c>.</param>
/// <param name="Target">The namespace referred to, e.g. <c>NormalFormFit.Smoothing</c> (<c>NormalFormFit</c> for the root types).</param>
/// <param name="Text">What was written, e.g. <c>using NormalFormFit.Smoothing;</c> or <c>Smoothing.Brent</c>.</param>
internal sealed record SourceReference(string File, int Line, string Namespace, string Target, string Text)
{
    public override string ToString() => $"{File}:{Line}: {Namespace} refers to {Target} ({Text})";
}

/// <summary>
/// Reads C# source as text, in the manner of ScottPlot's code-scanning tests (no compiler needed): blanks comments,
/// string and character literals (keeping the code inside interpolation holes and every line break, so positions stay),
/// then finds the file's namespace and its references to the program's namespaces, written in any of three ways:
/// a <c>using</c> directive (plain, static or alias), a fully qualified name <c>NormalFormFit.X.…</c>, or a name
/// qualified from the enclosing namespace, <c>X.Type</c>, where <c>Type</c> is declared in <c>NormalFormFit.X</c>.
/// </summary>
internal static partial class SourceReferences
{
    public const string Root = "NormalFormFit";

    /// <summary>The namespace of each type name declared in <paramref name="sources"/> (file text by path).</summary>
    public static IReadOnlyDictionary<string, HashSet<string>> DeclaredTypes(IEnumerable<(string Path, string Text)> sources)
    {
        var types = new Dictionary<string, HashSet<string>>(StringComparer.Ordinal);
        foreach (var (_, text) in sources)
        {
            var code = Blank(text);
            if (NamespaceOf(code) is not { } ns)
            {
                continue;
            }

            foreach (Match m in TypeDeclaration().Matches(code))
            {
                if (!types.TryGetValue(ns, out var set))
                {
                    types[ns] = set = new HashSet<string>(StringComparer.Ordinal);
                }

                set.Add(m.Groups["name"].Value);
            }
        }

        return types;
    }

    /// <summary>Every reference of <paramref name="text"/> to a namespace of the program other than its own.</summary>
    /// <param name="path">Named in each reference.</param>
    /// <param name="text">The file's text.</param>
    /// <param name="declared">Type names by namespace (from <see cref="DeclaredTypes"/>), to read <c>X.Type</c>.</param>
    public static IReadOnlyList<SourceReference> Find(string path, string text, IReadOnlyDictionary<string, HashSet<string>> declared)
    {
        var code = Blank(text);
        var ns = NamespaceOf(code) ?? string.Empty;
        var found = new List<SourceReference>();

        void Add(int index, string target, string what)
        {
            var line = 1 + code.AsSpan(0, index).Count('\n');
            if (target != ns && !ns.StartsWith(target + ".", StringComparison.Ordinal))
            {
                found.Add(new SourceReference(path, line, ns, target, what));
            }
        }

        foreach (Match m in UsingDirective().Matches(code))
        {
            Add(m.Index, NamespaceFromName(m.Groups["name"].Value, declared), m.Value.Trim());
        }

        foreach (Match m in QualifiedName().Matches(code))
        {
            if (!IsInUsingDirective(code, m.Index))
            {
                Add(m.Index, NamespaceFromName(m.Value, declared), m.Value);
            }
        }

        // X.Type from inside NormalFormFit.…: X resolves against the enclosing namespace NormalFormFit.
        if (ns.StartsWith(Root + ".", StringComparison.Ordinal))
        {
            foreach (Match m in ShortName().Matches(code))
            {
                var target = Root + "." + m.Groups["ns"].Value;
                if (declared.TryGetValue(target, out var types) && types.Contains(m.Groups["type"].Value))
                {
                    Add(m.Index, target, m.Value);
                }
            }
        }

        return found;
    }

    /// <summary>The namespace a dotted name starting at the root refers to: the longest declared namespace that prefixes it.</summary>
    private static string NamespaceFromName(string name, IReadOnlyDictionary<string, HashSet<string>> declared)
    {
        var parts = name.Split('.');
        for (var k = parts.Length; k >= 1; k--)
        {
            var candidate = string.Join('.', parts[..k]);
            if (declared.ContainsKey(candidate))
            {
                return candidate;
            }
        }

        // Not declared anywhere: a namespace of its own (so that an unknown NormalFormFit.X still shows as X).
        return parts.Length > 1 ? Root + "." + parts[1] : Root;
    }

    /// <summary>True when the file declares a type (a file of assembly attributes does not).</summary>
    public static bool DeclaresTypes(string text) => TypeDeclaration().IsMatch(Blank(text));

    /// <summary>The namespace a file declares (null when none).</summary>
    public static string? NamespaceOfFile(string text) => NamespaceOf(Blank(text));

    private static string? NamespaceOf(string code) => Namespace().Match(code) is { Success: true } m ? m.Groups["name"].Value : null;

    private static bool IsInUsingDirective(string code, int index)
    {
        var start = code.LastIndexOf('\n', Math.Max(index - 1, 0)) + 1;
        return UsingDirective().IsMatch(code[start..(code.IndexOf('\n', index) is var e and >= 0 ? e : code.Length)]);
    }

    /// <summary>
    /// The text with comments, strings and character literals replaced by spaces (line breaks kept; the code inside
    /// interpolation holes kept).
    /// </summary>
    internal static string Blank(string s)
    {
        var o = s.ToCharArray();
        Code(0, inHole: false);
        return new string(o);

        void Clear(int from, int to)
        {
            for (var k = from; k < Math.Min(to, s.Length); k++)
            {
                if (o[k] != '\n' && o[k] != '\r')
                {
                    o[k] = ' ';
                }
            }
        }

        char At(int k) => k < s.Length ? s[k] : '\0';

        // Scans code from i; inside an interpolation hole, returns the index after the hole's closing brace.
        int Code(int i, bool inHole)
        {
            var depth = 0;
            while (i < s.Length)
            {
                var c = s[i];
                if (c == '/' && At(i + 1) == '/')
                {
                    var end = s.IndexOf('\n', i);
                    end = end < 0 ? s.Length : end;
                    Clear(i, end);
                    i = end;
                }
                else if (c == '/' && At(i + 1) == '*')
                {
                    var end = s.IndexOf("*/", i + 2, StringComparison.Ordinal);
                    end = end < 0 ? s.Length : end + 2;
                    Clear(i, end);
                    i = end;
                }
                else if (c == '\'')
                {
                    var end = i + 1;
                    while (end < s.Length && s[end] != '\'')
                    {
                        end += s[end] == '\\' ? 2 : 1;
                    }

                    Clear(i, end + 1);
                    i = end + 1;
                }
                else if (StringStart(i) is var prefix and >= 0)
                {
                    i = Literal(i, prefix);
                }
                else
                {
                    if (inHole && c == '{')
                    {
                        depth++;
                    }
                    else if (inHole && c == '}')
                    {
                        if (depth == 0)
                        {
                            return i + 1;
                        }

                        depth--;
                    }

                    i++;
                }
            }

            return i;
        }

        // Length of the prefix ($, @, $@, @$, $$…) before a string's opening quote at i, or −1 when none starts here.
        int StringStart(int i)
        {
            var k = i;
            while (k < s.Length && (s[k] == '$' || s[k] == '@'))
            {
                k++;
            }

            var identifierBefore = i > 0 && (char.IsLetterOrDigit(s[i - 1]) || s[i - 1] == '_');
            return At(k) == '"' && !(identifierBefore && k > i) ? k - i : -1;
        }

        int Literal(int i, int prefixLength)
        {
            var prefix = s.Substring(i, prefixLength);
            var interpolated = prefix.Contains('$', StringComparison.Ordinal);
            var verbatim = prefix.Contains('@', StringComparison.Ordinal);
            var q = i + prefixLength;
            var quotes = 0;
            while (At(q + quotes) == '"')
            {
                quotes++;
            }

            if (quotes >= 3)
            {
                // Raw string literal: ends at the same number of quotes (holes not scanned: none in this code base).
                var close = s.IndexOf(new string('"', quotes), q + quotes, StringComparison.Ordinal);
                var end = close < 0 ? s.Length : close + quotes;
                Clear(i, end);
                return end;
            }

            var segment = i;
            var k = q + 1;
            while (k < s.Length)
            {
                var c = s[k];
                if (!verbatim && c == '\\')
                {
                    k += 2;
                }
                else if (c == '"' && verbatim && At(k + 1) == '"')
                {
                    k += 2;
                }
                else if (c == '"')
                {
                    Clear(segment, k + 1);
                    return k + 1;
                }
                else if (interpolated && c == '{' && At(k + 1) == '{')
                {
                    k += 2;
                }
                else if (interpolated && c == '{')
                {
                    Clear(segment, k + 1);
                    k = Code(k + 1, inHole: true);
                    segment = k - 1;
                }
                else
                {
                    k++;
                }
            }

            Clear(segment, s.Length);
            return s.Length;
        }
    }

    [GeneratedRegex(@"^\s*namespace\s+(?<name>[\w.]+)\s*[;{]", RegexOptions.Multiline)]
    private static partial Regex Namespace();

    [GeneratedRegex(@"^[ \t]*(?:global\s+)?using\s+(?:static\s+)?(?:\w+\s*=\s*)?(?:global::)?(?<name>NormalFormFit(?:\.\w+)*)\s*;", RegexOptions.Multiline)]
    private static partial Regex UsingDirective();

    [GeneratedRegex(@"(?<![\w.])(?:global::)?NormalFormFit(?:\.\w+)+")]
    private static partial Regex QualifiedName();

    [GeneratedRegex(@"(?<![\w.:])(?<ns>[A-Z]\w*)\.(?<type>[A-Z]\w*)")]
    private static partial Regex ShortName();

    [GeneratedRegex(@"\b(?:class|struct|interface|enum|record|delegate\s+[\w<>\[\],.? ]+?)\s+(?<name>[A-Z]\w*)")]
    private static partial Regex TypeDeclaration();
}
