using System.Globalization;

namespace NormalFormFit.Ingest;

/// <summary>How to read a run file.</summary>
public sealed record RunReadOptions
{
    /// <summary>Time column: a header name, or a 1-based position written as a number; null: recognised from the header (<see cref="ColumnNames"/>).</summary>
    public string? TimeColumn { get; init; }

    /// <summary>Phase column: a header name, or a 1-based position written as a number; null: recognised from the header.</summary>
    public string? PhaseColumn { get; init; }

    /// <summary>Unit of the phase column; null: the unit in its name (<c>theta_deg</c>), else radians.</summary>
    public PhaseUnit? PhaseUnit { get; init; }

    /// <summary>Per-sample quality column (<c>confidence</c>, <c>likelihood</c>…); null: recognised from the header; "none": not used.</summary>
    public string? QualityColumn { get; init; }

    /// <summary>Rows whose quality is below this are missing samples (default <see cref="RunReader.DefaultMinQuality"/>).</summary>
    public double MinQuality { get; init; } = RunReader.DefaultMinQuality;

    /// <summary>Unit of the time column (<c>s</c>, <c>ms</c>…); null: the unit in its name (<c>time_s</c>, <c>t [ms]</c>), else unknown.</summary>
    public string? TimeUnit { get; init; }

    /// <summary>Times are multiplied by this on reading (a manifest whose runs use different time units converts them to one).</summary>
    public double TimeScale { get; init; } = 1.0;

    /// <summary>Field separator; detected from the header by default.</summary>
    public Delimiter Delimiter { get; init; } = Delimiter.Auto;

    /// <summary>Numbers use a decimal comma (then the separator must not be a comma).</summary>
    public bool DecimalComma { get; init; }

    /// <summary>What the file records; inferred from the columns by default.</summary>
    public RecordingKindOption Kind { get; init; } = RecordingKindOption.Auto;

    /// <summary>Horizontal position column (positions): a header name or a 1-based position; null: recognised from the header.</summary>
    public string? XColumn { get; init; }

    /// <summary>Vertical position column (positions): a header name or a 1-based position; null: recognised from the header.</summary>
    public string? YColumn { get; init; }

    /// <summary>Event-time column (events); null: the only column, else the time column.</summary>
    public string? EventColumn { get; init; }

    /// <summary>Signal column (a single signal such as <c>Vm_mV</c>): a header name or a 1-based position; null: the one column besides time that is not a phase, position pair, quality or frame number.</summary>
    public string? SignalColumn { get; init; }

    /// <summary>The y axis of the positions points down (image rows): the turning sense is reported as seen on screen.</summary>
    public bool YDown { get; init; }

    /// <summary>The phase column is already unwrapped: steps between samples are taken as recorded.</summary>
    public bool PhaseUnwrapped { get; init; }

    /// <summary>Default options: columns recognised from the header, quality threshold 0.5.</summary>
    public static RunReadOptions Default { get; } = new();
}

/// <summary>Reads run files: phase, positions, event times or one signal versus time.</summary>
public static class RunReader
{
    /// <summary>
    /// A time step longer than this many typical (median) steps splits a run into segments. Shorter gaps (a few
    /// dropped frames) are ordinary non-uniform sampling that the smoothing spline bridges (common practice, no source).
    /// </summary>
    public const double GapFactor = 10.0;

    /// <summary>
    /// Rows whose quality (<c>confidence</c>, <c>likelihood</c>…) is below this are missing samples. Trackers score
    /// a detection from 0 to 1; half marks the point below which a detection is more likely wrong than right
    /// (common practice, no source). For a score in percent pass 50.
    /// </summary>
    public const double DefaultMinQuality = 0.5;

    /// <summary>
    /// Reads <paramref name="path"/> as a phase recording (<c>t,theta</c>). Errors (missing file, no data, text where
    /// a number should be, time not increasing, wrong number of fields) come back as diagnostics naming file, line
    /// and column; the reader never throws for bad content.
    /// </summary>
    public static Loaded<PhaseRecording> Read(string path, RunReadOptions? options = null, string? displayName = null)
    {
        var any = ReadRecording(path, (options ?? RunReadOptions.Default) with { Kind = RecordingKindOption.Phase }, displayName);
        return new Loaded<PhaseRecording>(any.Value as PhaseRecording, any.Diagnostics);
    }

    /// <summary>Reads a phase run from a stream; <paramref name="name"/> is used in messages.</summary>
    public static Loaded<PhaseRecording> Read(Stream stream, string name, RunReadOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var any = ReadRecording(stream, name, options with { Kind = RecordingKindOption.Phase });
        return new Loaded<PhaseRecording>(any.Value as PhaseRecording, any.Diagnostics);
    }

    /// <summary>
    /// Reads <paramref name="path"/> as whatever it records (see <see cref="RecordingKind"/>; inferred from the
    /// columns unless <see cref="RunReadOptions.Kind"/> says otherwise). Never throws for bad content.
    /// </summary>
    public static Loaded<RunRecording> ReadRecording(string path, RunReadOptions? options = null, string? displayName = null)
    {
        ArgumentNullException.ThrowIfNull(path);
        options ??= RunReadOptions.Default;
        var name = displayName ?? path;
        if (!System.IO.File.Exists(path))
        {
            return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "missing-file",
                "the file does not exist; check the path (paths in a manifest are relative to the manifest)", name));
        }

        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 16);
            return ReadRecording(stream, name, options);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "unreadable", $"cannot read the file: {e.Message}", name));
        }
    }

    /// <summary>Reads a run of any kind from a stream; <paramref name="name"/> is used in messages.</summary>
    public static Loaded<RunRecording> ReadRecording(Stream stream, string name, RunReadOptions options)
    {
        ArgumentNullException.ThrowIfNull(stream);
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(name);
        using var reader = new DelimitedTextReader(stream, options.Delimiter);
        if (!reader.Read())
        {
            if (reader.TooLong is not null)
            {
                return Loaded.Fail<RunRecording>(reader.TooLongError(name, ExpectedRunText));
            }

            return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "empty-file",
                "the file holds no data (only blank or # comment lines); expected a header such as 't,theta', 't,x,y', 'time_ms,Vm_mV' or 'spike_time' and one sample per line", name));
        }

        if (reader.LineLooksBinary())
        {
            return Loaded.Fail<RunRecording>(Binary(name, reader.LineNumber));
        }

        var diagnostics = new List<Diagnostic>();
        var header = Enumerable.Range(0, reader.FieldCount).Select(reader.FieldText).ToArray();
        var headerIsData = Enumerable.Range(0, reader.FieldCount).All(i =>
            DelimitedTextReader.TryParseNumber(reader.Field(i), options.DecimalComma, out _) || DelimitedTextReader.IsMissing(reader.Field(i)));
        var layout = headerIsData ? LayoutWithoutHeader(header.Length, options) : LayoutFromHeader(header, options);
        if (layout.Error is { } error)
        {
            return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "missing-column", error, name, reader.LineNumber, 1));
        }

        if (headerIsData)
        {
            diagnostics.Add(new Diagnostic(Severity.Info, "no-header",
                $"no header line; reading {Describe(layout)}; name the columns in a header line or set --kind", name, reader.LineNumber));
        }

        var cols = layout.Columns;
        var expectedFields = header.Length;
        var phaseUnit = options.PhaseUnit ?? layout.PhaseUnit ?? PhaseUnit.Radians;
        var scale = layout.Kind != RecordingKind.Phase ? 1.0 : phaseUnit switch
        {
            PhaseUnit.Degrees => Math.PI / 180.0,
            PhaseUnit.Turns => 2.0 * Math.PI,
            _ => 1.0,
        };
        var timeScale = options.TimeScale;
        var events = layout.Kind == RecordingKind.Events;
        var qualityCol = layout.QualityColumn;
        var values = new GrowableArray[cols.Length];
        for (var c = 0; c < cols.Length; c++)
        {
            values[c] = new GrowableArray(1024);
        }

        var segments = new List<int> { 0 };
        var gapPending = false;
        var lastTime = double.NegativeInfinity;
        var lastTimeLine = 0;
        var decimalComma = options.DecimalComma;
        var firstData = true;
        var first = true;
        int blank = 0, lowQuality = 0;
        Span<double> parsed = stackalloc double[3];
        do
        {
            if (first)
            {
                first = false;
                if (!headerIsData)
                {
                    continue;
                }
            }

            if (reader.FieldCount != expectedFields)
            {
                if (reader.LineLooksBinary())
                {
                    return Loaded.Fail<RunRecording>(Binary(name, reader.LineNumber));
                }

                var what = headerIsData ? "the first line" : "the header";
                return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "wrong-field-count",
                    $"found {reader.FieldCount} field(s) separated by {DelimiterName(reader.Delimiter)}, but {what} has {expectedFields}; every line needs the same columns (a decimal comma in a comma-separated file splits numbers: use ';' between fields, or pass --delimiter)",
                    name, reader.LineNumber, 1));
            }

            if (firstData)
            {
                firstData = false;
                if (!decimalComma && reader.Delimiter != Delimiter.Comma && LooksLikeDecimalComma(reader, cols))
                {
                    decimalComma = true;
                    diagnostics.Add(new Diagnostic(Severity.Info, "decimal-comma",
                        "numbers use a decimal comma (detected: commas inside numbers, no decimal points, fields not separated by commas)", name, reader.LineNumber));
                }
            }

            // A blank or non-finite value in a column that is read makes the row a missing sample.
            var missing = false;
            for (var c = 0; c < cols.Length; c++)
            {
                var field = reader.Field(cols[c]);
                if (DelimitedTextReader.IsMissing(field))
                {
                    missing = true;
                    continue;
                }

                if (!DelimitedTextReader.TryParseNumber(field, decimalComma, out parsed[c]))
                {
                    if (reader.LineLooksBinary())
                    {
                        return Loaded.Fail<RunRecording>(Binary(name, reader.LineNumber));
                    }

                    return Loaded.Fail<RunRecording>(BadNumber(reader, cols[c], name, layout.Roles[c], decimalComma));
                }

                missing |= !double.IsFinite(parsed[c]);
            }

            var dropLow = false;
            if (!missing && qualityCol >= 0)
            {
                var field = reader.Field(qualityCol);
                if (DelimitedTextReader.IsMissing(field))
                {
                    dropLow = true;
                }
                else if (!DelimitedTextReader.TryParseNumber(field, decimalComma, out var q))
                {
                    return Loaded.Fail<RunRecording>(BadNumber(reader, qualityCol, name, "quality", decimalComma));
                }
                else if (q > 1 && options.MinQuality <= 1)
                {
                    // A score on another scale (percent, 0–255) against a threshold for scores from 0 to 1 would keep every
                    // row: refused, never read silently.
                    return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "quality-scale",
                        string.Create(CultureInfo.InvariantCulture,
                            $"quality column '{header[qualityCol]}' holds {q:G} here, above 1: it is not a score from 0 to 1, which the threshold {options.MinQuality:G} is for; pass --min-quality with a threshold on the column's own scale (e.g. 50 for a score in percent), or --quality-column none to use every row"),
                        name, reader.LineNumber, reader.ColumnOf(qualityCol)));
                }
                else
                {
                    dropLow = !(q >= options.MinQuality);
                }
            }

            if (missing || dropLow)
            {
                if (missing)
                {
                    blank++;
                }
                else
                {
                    lowQuality++;
                }

                // Event times keep their gaps: an interval is never taken across a missing event. Samples of a phase
                // or of positions do not: whether the phase can be followed across a gap is decided later (Trajectory).
                gapPending = events && values[0].Count > 0;
                continue;
            }

            var tv = parsed[0] * timeScale;
            if (tv <= lastTime)
            {
                var what = tv == lastTime ? "repeats" : "goes backwards";
                return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "time-not-increasing",
                    string.Create(CultureInfo.InvariantCulture,
                        $"{layout.Roles[0]} {what} ({parsed[0]:R} after {lastTime / timeScale:R} on line {lastTimeLine}); values must strictly increase: sort the file or remove duplicate rows"),
                    name, reader.LineNumber, reader.ColumnOf(cols[0])));
            }

            if (gapPending)
            {
                segments.Add(values[0].Count);
                gapPending = false;
            }

            lastTime = tv;
            lastTimeLine = reader.LineNumber;
            values[0].Add(tv);
            for (var c = 1; c < cols.Length; c++)
            {
                values[c].Add(parsed[c] * scale);
            }
        }
        while (reader.Read());

        if (reader.TooLong is not null)
        {
            return Loaded.Fail<RunRecording>(reader.TooLongError(name, ExpectedRunText));
        }

        if (values[0].Count == 0 && events && blank + lowQuality == 0)
        {
            // A header and no event: a run that did not fire (a silent sweep) is a run that does not turn, not an error.
            diagnostics.Add(new Diagnostic(Severity.Info, "no-events", "the file has a header but no event times: read as a run without events (it does not turn)", name));
            return new Loaded<RunRecording>(new EventRecording(name, [], [0])
            {
                TimeUnit = options.TimeUnit is { } eu ? ColumnNames.NormaliseUnit(eu) : layout.TimeUnit,
            }, diagnostics);
        }

        if (values[0].Count == 0)
        {
            var none = blank + lowQuality == 0
                ? $"the file has a header but no data lines; expected one line per sample ({Describe(layout)})"
                : $"every data line is a missing sample ({blank} with a blank or non-finite value, {lowQuality} below quality {options.MinQuality:G}); expected one line per sample ({Describe(layout)}): check the columns, or lower --min-quality";
            return Loaded.Fail<RunRecording>(new Diagnostic(Severity.Error, "no-data", none, name, reader.LineNumber));
        }

        var time = values[0].ToArray();
        int[] segs = [.. segments];
        if (layout.Kind != RecordingKind.Events)
        {
            CountLongSteps(time, out var gaps, out var longest);
            if (gaps > 0)
            {
                diagnostics.Add(new Diagnostic(Severity.Info, "gaps", string.Create(CultureInfo.InvariantCulture,
                    $"{gaps} gap(s) longer than {GapFactor:G} typical sampling steps (longest {Numerics.ErrorDigits.Plain(longest, 3)} steps): {(layout.Kind == RecordingKind.Signal
                        ? "the signal is split there: no interval between events is timed across a gap, and a delay-embedded orbit never spans one"
                        : "the phase is followed across a gap shorter than half the local revolution time, and the run is split at a longer one")}"),
                    name));
            }
        }

        if (blank + lowQuality > 0)
        {
            diagnostics.Add(new Diagnostic(Severity.Info, "rows-dropped", string.Create(CultureInfo.InvariantCulture,
                $"{blank + lowQuality} row(s) are missing samples: {blank} with a blank or non-finite value, {lowQuality} below quality {options.MinQuality:G}{(qualityCol >= 0 ? $" (column '{header[qualityCol]}')" : string.Empty)}"),
                name));
        }

        var timeUnit = options.TimeUnit is { } tu ? ColumnNames.NormaliseUnit(tu) : layout.TimeUnit;
        var dropped = new DroppedRows(blank, lowQuality, 0, 0);
        RunRecording recording = layout.Kind switch
        {
            RecordingKind.Phase => new PhaseRecording(name, time, values[1].ToArray(), segs) { Unwrapped = options.PhaseUnwrapped, PhaseColumnName = layout.Names[1] },
            RecordingKind.Positions => new PositionRecording(name, time, values[1].ToArray(), values[2].ToArray(), segs, options.YDown),
            RecordingKind.Signal => new SignalRecording(name, time, values[1].ToArray(), SplitAtLongSteps(time, segs, out _, out _)) { SignalColumnName = layout.Names[1] },
            _ => new EventRecording(name, time, segs),
        };
        recording = recording with { TimeUnit = timeUnit, Dropped = dropped };
        return new Loaded<RunRecording>(recording, diagnostics);
    }

    /// <summary>
    /// Reads only the header of a run file and returns the unit of its time column (from the name, or the option):
    /// what a manifest needs to bring runs with different time units to one. Null when unknown or unreadable.
    /// </summary>
    public static string? TimeUnitOf(string path, RunReadOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (options.TimeUnit is { } given)
        {
            return ColumnNames.NormaliseUnit(given);
        }

        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, 1 << 12);
            using var reader = new DelimitedTextReader(stream, options.Delimiter);
            if (!reader.Read() || reader.LineLooksBinary())
            {
                return null;
            }

            var header = Enumerable.Range(0, reader.FieldCount).Select(reader.FieldText).ToArray();
            var headerIsData = Enumerable.Range(0, reader.FieldCount).All(i =>
                DelimitedTextReader.TryParseNumber(reader.Field(i), options.DecimalComma, out _) || DelimitedTextReader.IsMissing(reader.Field(i)));
            return headerIsData ? null : LayoutFromHeader(header, options).TimeUnit;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return null;
        }
    }

    /// <summary>Counts time steps longer than <see cref="GapFactor"/> typical (median) steps.</summary>
    internal static void CountLongSteps(double[] time, out int gaps, out double longest)
    {
        var starts = SplitAtLongSteps(time, [0], out gaps, out longest);
        _ = starts;
    }

    /// <summary>
    /// Splits segments where a time step exceeds <see cref="GapFactor"/> times the median step (estimated from at most
    /// 4097 evenly spread steps, so O(n)). A few dropped frames in a row do not split.
    /// </summary>
    internal static int[] SplitAtLongSteps(double[] time, int[] segments, out int gaps, out double longest)
    {
        gaps = 0;
        longest = 0;
        var n = time.Length;
        if (n < 3)
        {
            return segments;
        }

        var stride = Math.Max(1, (n - 1) / 4096);
        var sample = new List<double>();
        for (var i = 1; i < n; i += stride)
        {
            sample.Add(time[i] - time[i - 1]);
        }

        sample.Sort();
        var typical = sample[sample.Count / 2];
        if (!(typical > 0))
        {
            return segments;
        }

        var result = new List<int>();
        var k = 0;
        for (var i = 0; i < n; i++)
        {
            if (k < segments.Length && segments[k] == i)
            {
                result.Add(i);
                k++;
            }
            else if (i > 0)
            {
                var ratio = (time[i] - time[i - 1]) / typical;
                if (ratio > GapFactor)
                {
                    result.Add(i);
                    gaps++;
                    longest = Math.Max(longest, ratio);
                }
            }
        }

        return [.. result];
    }

    // Kind, Columns and Roles mean something only without an Error.
    private sealed record Layout(RecordingKind Kind, int[] Columns, string[] Roles, string? Error)
    {
        public static Layout Failed(string error) => new(default, [], [], error);

        /// <summary>Per-sample quality column; −1 when none.</summary>
        public int QualityColumn { get; init; } = -1;

        /// <summary>Unit of the time column from its name; null when none.</summary>
        public string? TimeUnit { get; init; }

        /// <summary>Unit of the phase column from its name; null when none.</summary>
        public PhaseUnit? PhaseUnit { get; init; }

        /// <summary>Header names of <see cref="Columns"/> (or "column K" without a header).</summary>
        public string[] Names { get; init; } = [];
    }

    private static readonly string[] PhaseRoles = ["time", "phase"];
    private static readonly string[] PositionRoles = ["time", "x", "y"];
    private static readonly string[] EventRoles = ["event time"];
    private static readonly string[] SignalRoles = ["time", "signal"];

    private static Layout LayoutWithoutHeader(int fields, RunReadOptions o)
    {
        var kind = Requested(o.Kind) ?? (fields == 1 ? RecordingKind.Events
            : fields == 2 ? RecordingKind.Phase
            : RecordingKind.Positions);
        int Pos(string? spec, int fallback) => spec is not null && TryPosition(spec, out var k) ? k : fallback;
        int[] cols = kind switch
        {
            RecordingKind.Phase => [Pos(o.TimeColumn, 0), Pos(o.PhaseColumn, 1)],
            RecordingKind.Positions => [Pos(o.TimeColumn, 0), Pos(o.XColumn, 1), Pos(o.YColumn, 2)],
            RecordingKind.Signal => [Pos(o.TimeColumn, 0), Pos(o.SignalColumn, 1)],
            _ => [Pos(o.EventColumn ?? o.TimeColumn, 0)],
        };
        var roles = Roles(kind);
        var beyond = Array.FindIndex(cols, c => c >= fields);
        var quality = o.QualityColumn is { } q && TryPosition(q, out var qk) && qk < fields ? qk : -1;
        string[] names = [.. cols.Select(c => $"column {c + 1}")];
        return beyond >= 0
            ? new Layout(kind, cols, roles, $"the {roles[beyond]} column is {cols[beyond] + 1} but the first line has only {fields} field(s); give the column positions with --time-column, --phase-column, --x-column, --y-column or --event-column")
            : new Layout(kind, cols, roles, null) { QualityColumn = quality, Names = names };
    }

    private static Layout LayoutFromHeader(string[] header, RunReadOptions o)
    {
        var found = string.Join(", ", header);
        var hint = "expected a time column ('t', 'time', 'time_s'…) with a phase ('theta', 'phase', 'angle_deg'…) or positions ('x', 'y', 'x_px', 'y_px'…), or one column of event times (docs/input-formats.md lists the names); name the columns with --time-column, --phase-column, --x-column, --y-column or a time column and one signal such as 'Vm_mV' (docs/input-formats.md lists the names); name the columns with --time-column, --phase-column, --x-column, --y-column, --event-column or --signal-column (by header name or 1-based position), or set --kind";
        var recognised = header.Select(ColumnNames.Recognise).ToArray();

        // Candidates for one role; an option names the column instead.
        List<int> Candidates(ColumnRole role) => [.. Enumerable.Range(0, header.Length).Where(i => recognised[i].Role == role)];
        string Listed(IEnumerable<int> cols) => string.Join(", ", cols.Select(i => "'" + header[i] + "'"));
        string Ambiguous(string what, List<int> cols, string option) =>
            $"more than one column could be the {what} ({Listed(cols)}); choose one with {option} NAME";

        var phases = Candidates(ColumnRole.Phase);
        var phaseSpec = o.PhaseColumn is { } ps ? Resolve(ps, header) : phases.Count == 1 ? phases[0] : -1;

        // Position pairs: x and y with the same marker (or none).
        var xs = Candidates(ColumnRole.X);
        var pairs = xs
            .Select(x => (X: x, Y: Enumerable.Range(0, header.Length).FirstOrDefault(
                j => recognised[j].Role == ColumnRole.Y && recognised[j].Marker == recognised[x].Marker && recognised[j].Unit == recognised[x].Unit, -1)))
            .Where(p => p.Y >= 0)
            .ToList();
        var xSpec = o.XColumn is { } xo ? Resolve(xo, header) : pairs.Count == 1 ? pairs[0].X : -1;
        var ySpec = o.YColumn is { } yo ? Resolve(yo, header)
            : o.XColumn is not null && xSpec >= 0 ? pairs.FirstOrDefault(p => p.X == xSpec, (X: -1, Y: -1)).Y
            : pairs.Count == 1 ? pairs[0].Y : -1;

        // A single signal: a time column and one other column that holds a measurement (not a quality or a frame number).
        var times0 = Candidates(ColumnRole.Time);
        var measured = Enumerable.Range(0, header.Length)
            .Where(i => recognised[i].Role is ColumnRole.Other or ColumnRole.X or ColumnRole.Y && !times0.Contains(i)).ToList();
        var signalSpec = o.SignalColumn is { } so ? Resolve(so, header) : measured.Count == 1 ? measured[0] : -1;

        RecordingKind? requested = Requested(o.Kind);
        if (requested is null)
        {
            if (o.PhaseColumn is null && phases.Count > 1)
            {
                return Layout.Failed(Ambiguous("phase", phases, "--phase-column"));
            }

            if (phaseSpec >= 0)
            {
                requested = RecordingKind.Phase;
            }
            else if (xSpec >= 0 && ySpec >= 0)
            {
                requested = RecordingKind.Positions;
            }
            else if (o.XColumn is null && o.YColumn is null && pairs.Count > 1)
            {
                return Layout.Failed($"more than one pair of columns could be the positions ({string.Join("; ", pairs.Select(p => Listed([p.X, p.Y])))}); choose one with --x-column NAME --y-column NAME");
            }
            else if (header.Length == 1 || (o.EventColumn is { } ev && Resolve(ev, header) >= 0))
            {
                requested = RecordingKind.Events;
            }
            else if (o.SignalColumn is not null || (signalSpec >= 0 && (o.TimeColumn is not null || times0.Count == 1)))
            {
                requested = RecordingKind.Signal;
            }
        }

        if (requested is not { } kind)
        {
            var others = Enumerable.Range(0, header.Length).Where(i => recognised[i].Role == ColumnRole.Other).ToList();
            var signal = measured.Count > 1
                ? $" (columns {Listed(measured)} could each be a single signal: choose one with --signal-column NAME)"
                : string.Empty;
            return Layout.Failed($"cannot tell what the file records from its header (found: {found}){signal}; {hint}");
        }

        int TimeColumn()
        {
            if (o.TimeColumn is { } spec)
            {
                return Resolve(spec, header);
            }

            var times = Candidates(ColumnRole.Time);
            return times.Count == 1 ? times[0] : times.Count == 0 ? -1 : -2;
        }

        var roles = Roles(kind);
        int[] cols;
        string[] specs;
        switch (kind)
        {
            case RecordingKind.Phase:
                cols = [TimeColumn(), o.PhaseColumn is { } p ? Resolve(p, header) : phases.Count == 1 ? phases[0] : phases.Count == 0 ? -1 : -2];
                specs = [o.TimeColumn ?? "t", o.PhaseColumn ?? "theta"];
                break;
            case RecordingKind.Positions:
                cols = [TimeColumn(), xSpec, ySpec];
                specs = [o.TimeColumn ?? "t", o.XColumn ?? "x", o.YColumn ?? "y"];
                break;
            case RecordingKind.Signal:
                cols = [TimeColumn(), signalSpec];
                specs = [o.TimeColumn ?? "t", o.SignalColumn ?? "signal"];
                break;
            default:
                var evSpec = o.EventColumn ?? o.TimeColumn;
                cols = [evSpec is not null ? Resolve(evSpec, header) : header.Length == 1 ? 0 : TimeColumn()];
                specs = [evSpec ?? "t"];
                break;
        }

        var ambiguous = Array.FindIndex(cols, c => c == -2);
        if (ambiguous >= 0)
        {
            var role = ambiguous == 0 ? ColumnRole.Time : ColumnRole.Phase;
            return Layout.Failed(Ambiguous(roles[ambiguous], Candidates(role), ambiguous == 0 ? "--time-column" : "--phase-column"));
        }

        var missing = Array.FindIndex(cols, c => c < 0);
        if (missing >= 0)
        {
            return Layout.Failed($"no {roles[missing]} column '{specs[missing]}' in the header (found: {found}); {hint}");
        }

        // Quality: the option, else the recognised column (of the chosen marker when there are several).
        var quality = -1;
        if (o.QualityColumn is { } qspec)
        {
            if (!string.Equals(qspec, "none", StringComparison.OrdinalIgnoreCase))
            {
                quality = Resolve(qspec, header);
                if (quality < 0)
                {
                    return Layout.Failed($"no quality column '{qspec}' in the header (found: {found}); name it with --quality-column, or pass --quality-column none");
                }
            }
        }
        else if (kind != RecordingKind.Events)
        {
            var qs = Candidates(ColumnRole.Quality);
            if (qs.Count > 1 && kind == RecordingKind.Positions)
            {
                var marker = recognised[cols[1]].Marker;
                var own = qs.Where(q => recognised[q].Marker == marker).ToList();
                qs = own.Count > 0 ? own : qs;
            }

            if (qs.Count > 1)
            {
                return Layout.Failed(Ambiguous("quality", qs, "--quality-column"));
            }

            quality = qs.Count == 1 ? qs[0] : -1;
        }

        var timeUnit = recognised[cols[0]].Unit;
        if (timeUnit is not null && !ColumnNames.TimeUnits.ContainsKey(timeUnit))
        {
            timeUnit = null;
        }

        PhaseUnit? phaseUnit = kind == RecordingKind.Phase && recognised[cols[1]].Unit is { } pu && ColumnNames.PhaseUnits.TryGetValue(pu, out var unit) ? unit : null;
        return new Layout(kind, cols, roles, null)
        {
            QualityColumn = quality,
            TimeUnit = timeUnit,
            PhaseUnit = phaseUnit,
            Names = [.. cols.Select(c => header[c])],
        };
    }

    private static RecordingKind? Requested(RecordingKindOption option) => option switch
    {
        RecordingKindOption.Phase => RecordingKind.Phase,
        RecordingKindOption.Positions => RecordingKind.Positions,
        RecordingKindOption.Events => RecordingKind.Events,
        RecordingKindOption.Signal => RecordingKind.Signal,
        _ => null,
    };

    private static string[] Roles(RecordingKind kind) => kind switch
    {
        RecordingKind.Phase => PhaseRoles,
        RecordingKind.Positions => PositionRoles,
        RecordingKind.Signal => SignalRoles,
        _ => EventRoles,
    };

    private static string Describe(Layout layout) =>
        string.Join(", ", layout.Roles.Select((r, i) => $"column {layout.Columns[i] + 1} as {r}"));

    private static bool LooksLikeDecimalComma(DelimitedTextReader reader, int[] cols)
    {
        var commas = 0;
        foreach (var c in cols)
        {
            var f = reader.Field(c);
            if (f.Contains((byte)'.'))
            {
                return false;
            }

            if (f.Contains((byte)','))
            {
                if (f.IndexOf((byte)',') != f.LastIndexOf((byte)',') || !DelimitedTextReader.TryParseNumber(f, true, out _))
                {
                    return false;
                }

                commas++;
            }
        }

        return commas > 0;
    }

    private static string DelimiterName(Delimiter d) => d switch
    {
        Delimiter.Comma => "commas",
        Delimiter.Semicolon => "semicolons",
        Delimiter.Tab => "tabs",
        _ => "blanks",
    };

    private const string ExpectedRunText = "delimited text (CSV) with one sample per line";

    private static Diagnostic Binary(string name, int line) => new(Severity.Error, "binary-file",
        "the file is not text (it holds control bytes or invalid UTF-8); expected a delimited text file (CSV) of samples: export the recording as text",
        name, line);

    private static Diagnostic BadNumber(DelimitedTextReader reader, int col, string name, string what, bool decimalComma)
    {
        var text = reader.FieldText(col);
        if (text.Length > 40)
        {
            text = text[..40] + "…";
        }

        var hint = !decimalComma && text.Contains(',', StringComparison.Ordinal)
            ? "; if the file uses a decimal comma, pass --decimal-comma"
            : "; fix or delete the line (leave the field empty or write NaN to mark a missing value)";
        return new Diagnostic(Severity.Error, "not-a-number",
            $"expected a number for the {what} in column {col + 1}, found '{text}'{hint}",
            name, reader.LineNumber, reader.ColumnOf(col));
    }

    private static bool TryPosition(string spec, out int index)
    {
        if (int.TryParse(spec, NumberStyles.None, CultureInfo.InvariantCulture, out var k) && k >= 1)
        {
            index = k - 1;
            return true;
        }

        index = -1;
        return false;
    }

    private static int Resolve(string spec, string[] header)
    {
        if (TryPosition(spec, out var k))
        {
            return k < header.Length ? k : -1;
        }

        return Array.FindIndex(header, h => string.Equals(h, spec, StringComparison.OrdinalIgnoreCase));
    }
}

/// <summary>
/// A list of doubles stored in fixed-size chunks: growing never copies, and <see cref="ToArray"/> needs only the
/// final array besides the chunks (peak 2n doubles instead of 3n with doubling).
/// </summary>
internal sealed class GrowableArray(int capacity)
{
    private const int ChunkLength = 1 << 16;
    private readonly List<double[]> _chunks = [];
    private double[] _current = new double[Math.Clamp(capacity, 4, ChunkLength)];
    private int _used;
    private int _full;

    public int Count => _full + _used;

    public void Add(double v)
    {
        if (_used == _current.Length)
        {
            _chunks.Add(_current);
            _full += _used;
            _current = new double[ChunkLength];
            _used = 0;
        }

        _current[_used++] = v;
    }

    public double[] ToArray()
    {
        var result = new double[Count];
        var at = 0;
        foreach (var c in _chunks)
        {
            c.CopyTo(result, at);
            at += c.Length;
        }

        _current.AsSpan(0, _used).CopyTo(result.AsSpan(at));
        return result;
    }
}
