using System.Globalization;
using System.Text;

namespace NormalFormFit.Ingest;

/// <summary>What a column of a run file holds, as recognised from its header name.</summary>
public enum ColumnRole
{
    /// <summary>Sample time (<c>t</c>, <c>time</c>, <c>timestamp</c>).</summary>
    Time,

    /// <summary>A phase or angle (<c>theta</c>, <c>phase</c>, <c>phi</c>, <c>angle</c>).</summary>
    Phase,

    /// <summary>Horizontal position or first state variable.</summary>
    X,

    /// <summary>Vertical position or second state variable.</summary>
    Y,

    /// <summary>Per-sample quality of a tracked position (<c>confidence</c>, <c>likelihood</c>, <c>quality</c>, <c>score</c>).</summary>
    Quality,

    /// <summary>Bookkeeping that carries no measurement (<c>frame</c>, <c>index</c>, <c>sample</c>): ignored.</summary>
    Bookkeeping,

    /// <summary>
    /// None of the above: a time column with one such column is read as a single signal (a voltage <c>Vm_mV</c>, a
    /// light level, a current), in which events are detected (<see cref="RecordingKind.Signal"/>).
    /// </summary>
    Other,
}

/// <summary>A header name read as a role, a unit and (for marker exports) the marker it belongs to.</summary>
/// <param name="Role">What the column holds.</param>
/// <param name="Unit">The unit written in the name (<c>s</c>, <c>ms</c>, <c>deg</c>, <c>px</c>…), normalised; null when none.</param>
/// <param name="Marker">For <c>nose_x</c>, <c>nose.likelihood</c>: the marker's name (<c>nose</c>); null otherwise.</param>
public sealed record RecognisedColumn(ColumnRole Role, string? Unit, string? Marker);

/// <summary>
/// The one table of header names nffit recognises without options (docs/input-formats.md lists every name), and the
/// units written as a suffix (<c>time_s</c>, <c>x_px</c>, <c>theta_deg</c>) or in brackets (<c>time (s)</c>,
/// <c>t [ms]</c>). Matching ignores case and the separators <c>_</c>, <c>-</c>, <c>.</c> and blanks between words.
/// </summary>
public static class ColumnNames
{
    /// <summary>Base names of the time column.</summary>
    public static IReadOnlyList<string> TimeNames { get; } = ["t", "time", "timestamp", "time stamp", "elapsed time"];

    /// <summary>Base names of a phase or angle column.</summary>
    public static IReadOnlyList<string> PhaseNames { get; } = ["theta", "phase", "phi", "angle", "θ", "φ"];

    /// <summary>Names of a horizontal position column (the vertical one has y for x).</summary>
    public static IReadOnlyList<string> XNames { get; } =
        ["x", "pos x", "x pos", "posx", "xpos", "position x", "x position", "cx", "centre x", "center x", "centroid x", "marker x"];

    /// <summary>Names of a per-sample quality column.</summary>
    public static IReadOnlyList<string> QualityNames { get; } = ["confidence", "likelihood", "quality", "score", "conf", "prob", "probability"];

    /// <summary>Names of bookkeeping columns, ignored.</summary>
    public static IReadOnlyList<string> BookkeepingNames { get; } =
        ["frame", "frames", "frame index", "frame no", "frame number", "frame nr", "index", "idx", "sample", "sample index", "sample number", "row", "n", "no", "#", ""];

    /// <summary>Time units: normalised name → seconds per unit (SI prefixes of the second, and minutes and hours).</summary>
    public static IReadOnlyDictionary<string, double> TimeUnits { get; } = new Dictionary<string, double>(StringComparer.Ordinal)
    {
        ["s"] = 1,
        ["ms"] = 1e-3,
        ["us"] = 1e-6,
        ["ns"] = 1e-9,
        ["min"] = 60,
        ["h"] = 3600,
    };

    /// <summary>Phase units: normalised name → unit.</summary>
    public static IReadOnlyDictionary<string, PhaseUnit> PhaseUnits { get; } = new Dictionary<string, PhaseUnit>(StringComparer.Ordinal)
    {
        ["rad"] = PhaseUnit.Radians,
        ["deg"] = PhaseUnit.Degrees,
        ["turns"] = PhaseUnit.Turns,
    };

    /// <summary>Position units, normalised names.</summary>
    public static IReadOnlyList<string> PositionUnits { get; } = ["px", "mm", "cm", "m", "um", "in", "au"];

    // Spellings → normalised unit.
    private static readonly Dictionary<string, string> UnitSpellings = new(StringComparer.Ordinal)
    {
        ["s"] = "s",
        ["sec"] = "s",
        ["secs"] = "s",
        ["second"] = "s",
        ["seconds"] = "s",
        ["ms"] = "ms",
        ["msec"] = "ms",
        ["millisecond"] = "ms",
        ["milliseconds"] = "ms",
        ["us"] = "us",
        ["µs"] = "us",
        ["μs"] = "us",
        ["usec"] = "us",
        ["microsecond"] = "us",
        ["microseconds"] = "us",
        ["ns"] = "ns",
        ["nanosecond"] = "ns",
        ["nanoseconds"] = "ns",
        ["min"] = "min",
        ["minute"] = "min",
        ["minutes"] = "min",
        ["h"] = "h",
        ["hr"] = "h",
        ["hour"] = "h",
        ["hours"] = "h",
        ["rad"] = "rad",
        ["radian"] = "rad",
        ["radians"] = "rad",
        ["deg"] = "deg",
        ["degree"] = "deg",
        ["degrees"] = "deg",
        ["°"] = "deg",
        ["turn"] = "turns",
        ["turns"] = "turns",
        ["rev"] = "turns",
        ["revs"] = "turns",
        ["cycles"] = "turns",
        ["px"] = "px",
        ["pix"] = "px",
        ["pixel"] = "px",
        ["pixels"] = "px",
        ["mm"] = "mm",
        ["cm"] = "cm",
        ["m"] = "m",
        ["um"] = "um",
        ["µm"] = "um",
        ["μm"] = "um",
        ["in"] = "in",
        ["au"] = "au",
    };

    /// <summary>Reads one header name. Never throws.</summary>
    public static RecognisedColumn Recognise(string header)
    {
        ArgumentNullException.ThrowIfNull(header);
        var (words, unit) = SplitUnit(header);
        var name = string.Join(' ', words);
        if (TimeNames.Contains(name) && (unit is null || TimeUnits.ContainsKey(unit)))
        {
            return new RecognisedColumn(ColumnRole.Time, unit, null);
        }

        if (PhaseNames.Contains(name) && (unit is null || PhaseUnits.ContainsKey(unit)))
        {
            return new RecognisedColumn(ColumnRole.Phase, unit, null);
        }

        var positionUnit = unit is null || PositionUnits.Contains(unit);
        if (positionUnit && XNames.Contains(name))
        {
            return new RecognisedColumn(ColumnRole.X, unit, null);
        }

        if (positionUnit && XNames.Contains(SwapXy(name)))
        {
            return new RecognisedColumn(ColumnRole.Y, unit, null);
        }

        if (unit is null && QualityNames.Contains(name))
        {
            return new RecognisedColumn(ColumnRole.Quality, null, null);
        }

        if (unit is null && BookkeepingNames.Contains(name))
        {
            return new RecognisedColumn(ColumnRole.Bookkeeping, null, null);
        }

        // Marker exports: <marker>_x, <marker>_y, <marker>_likelihood (and x_<marker>).
        if (words.Count >= 2)
        {
            var last = words[^1];
            var rest = string.Join(' ', words.Take(words.Count - 1));
            if (positionUnit && last is "x" or "y")
            {
                return new RecognisedColumn(last == "x" ? ColumnRole.X : ColumnRole.Y, unit, rest);
            }

            if (unit is null && QualityNames.Contains(last))
            {
                return new RecognisedColumn(ColumnRole.Quality, null, rest);
            }

            var first = words[0];
            if (positionUnit && first is "x" or "y")
            {
                return new RecognisedColumn(first == "x" ? ColumnRole.X : ColumnRole.Y, unit, string.Join(' ', words.Skip(1)));
            }
        }

        return new RecognisedColumn(ColumnRole.Other, unit, null);
    }

    /// <summary>
    /// Splits a header name into lower-case words and a unit: a unit in brackets at the end (<c>time (s)</c>,
    /// <c>I_app [pA]</c>), else a last word that is a known unit (<c>time_s</c>, <c>x_px</c>). The unit keeps its
    /// spelling when it is not one nffit knows (brackets only); known units are normalised (<c>sec</c> → <c>s</c>).
    /// </summary>
    public static (IReadOnlyList<string> Words, string? Unit) SplitUnit(string header)
    {
        ArgumentNullException.ThrowIfNull(header);
        var text = header.Trim();
        string? unit = null;
        if (text.Length > 2 && text[^1] is ')' or ']')
        {
            var open = text.LastIndexOf(text[^1] == ')' ? '(' : '[');
            if (open > 0)
            {
                unit = text[(open + 1)..^1].Trim();
                text = text[..open];
                if (unit.Length == 0)
                {
                    unit = null;
                }
            }
        }

        var words = Words(text);
        if (unit is not null)
        {
            return (words, UnitSpellings.TryGetValue(unit.ToLowerInvariant(), out var known) ? known : unit);
        }

        if (words.Count >= 2 && UnitSpellings.TryGetValue(words[^1], out var suffix))
        {
            var stem = words.Take(words.Count - 1).ToList();
            return (stem, suffix);
        }

        return (words, null);
    }

    /// <summary>The unit written in a manifest's parameter column name (<c>voltage_V</c> → V, <c>I_app [pA]</c> → pA); null when none.</summary>
    /// <remarks>Parameter units are kept as written: any bracketed unit, or a last word after <c>_</c> of at most four characters.</remarks>
    public static (string Name, string? Unit) SplitParameterName(string header)
    {
        ArgumentNullException.ThrowIfNull(header);
        var text = header.Trim();
        if (text.Length > 2 && text[^1] is ')' or ']')
        {
            var open = text.LastIndexOf(text[^1] == ')' ? '(' : '[');
            if (open > 0)
            {
                var unit = text[(open + 1)..^1].Trim();
                return (text[..open].Trim(), unit.Length > 0 ? unit : null);
            }
        }

        var cut = text.LastIndexOf('_');
        if (cut > 0 && cut < text.Length - 1 && text.Length - cut - 1 <= 4 && text[(cut + 1)..].All(c => char.IsLetter(c) || c is 'µ' or 'Ω' or '°'))
        {
            return (text[..cut], text[(cut + 1)..]);
        }

        return (text, null);
    }

    /// <summary>Seconds per unit of a recognised time unit; NaN when the unit is not one of <see cref="TimeUnits"/>.</summary>
    public static double SecondsPer(string? unit) => unit is not null && TimeUnits.TryGetValue(unit, out var s) ? s : double.NaN;

    /// <summary>Normalises a unit written by the user (<c>sec</c> → <c>s</c>); unknown spellings are kept as written.</summary>
    public static string NormaliseUnit(string unit)
    {
        ArgumentNullException.ThrowIfNull(unit);
        var u = unit.Trim();
        return UnitSpellings.TryGetValue(u.ToLowerInvariant(), out var known) ? known : u;
    }

    private static string SwapXy(string name)
    {
        var sb = new StringBuilder(name.Length);
        foreach (var c in name)
        {
            sb.Append(c switch { 'x' => 'y', 'y' => 'x', _ => c });
        }

        return sb.ToString();
    }

    private static List<string> Words(string text)
    {
        var words = new List<string>();
        var sb = new StringBuilder();
        foreach (var c in text.ToLower(CultureInfo.InvariantCulture))
        {
            if (c is '_' or '-' or '.' or ' ' or '\t' or ':' or '/')
            {
                if (sb.Length > 0)
                {
                    words.Add(sb.ToString());
                    sb.Clear();
                }
            }
            else
            {
                sb.Append(c);
            }
        }

        if (sb.Length > 0)
        {
            words.Add(sb.ToString());
        }

        return words;
    }
}
