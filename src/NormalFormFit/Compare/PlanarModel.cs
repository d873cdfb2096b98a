using System.Globalization;
using NormalFormFit.Ingest;

namespace NormalFormFit.Compare;

/// <summary>
/// A planar reduced model: two equations <c>name' = right-hand side</c> in two named state variables, the control
/// parameter <c>mu</c> and free parameters, with the variable that was recorded. Syntax (docs/model-expressions.md):
/// statements separated by <c>;</c> or line breaks, each a variable name, a prime, <c>=</c> and an expression in the
/// language of <see cref="ModelExpression"/> in which the two variable names stand for the state.
/// </summary>
public sealed class PlanarModel
{
    /// <summary>Error code: the text is not two statements <c>name' = expression</c>.</summary>
    public const string BadSystem = "bad-system";

    /// <summary>Error code: a state variable has no equation of its own (or one has two).</summary>
    public const string MissingEquation = "system-missing-equation";

    /// <summary>Error code: no equation uses <c>mu</c>.</summary>
    public const string NoMu = ModelRequirements.NoMu;

    /// <summary>Error code: the recorded variable is not given, or not a variable of the system.</summary>
    public const string BadObservable = "bad-observable";

    private readonly int[][] parameterIndex;
    private readonly Lazy<(Func<double, double, double, double[], double>, Func<double, double, double, double[], double>)> compiled;

    private PlanarModel(string text, string[] variables, ModelExpression[] equations, IReadOnlyList<string> parameters, int observed)
    {
        Text = text;
        Variables = variables;
        Equations = equations;
        Parameters = parameters;
        Observed = observed;
        parameterIndex = [.. equations.Select(e => e.Parameters.Select(p => parameters.ToList().IndexOf(p)).ToArray())];
        compiled = new(() => (equations[0].CompileState(), equations[1].CompileState()));
    }

    /// <summary>The system as the user wrote it.</summary>
    public string Text { get; }

    /// <summary>The two state variables, in the order of their equations.</summary>
    public IReadOnlyList<string> Variables { get; }

    /// <summary>The right-hand sides, in the order of <see cref="Variables"/>.</summary>
    public IReadOnlyList<ModelExpression> Equations { get; }

    /// <summary>Free parameters of both equations, in order of first appearance.</summary>
    public IReadOnlyList<string> Parameters { get; }

    /// <summary>Index (0 or 1) of the recorded variable.</summary>
    public int Observed { get; }

    /// <summary>True when the text is written as a system (it holds an '='), not as a phase expression.</summary>
    public static bool LooksLikeSystem(string text) => text.Contains('=', StringComparison.Ordinal);

    /// <summary>
    /// Parses a system and the name of its recorded variable. Errors name the statement, the line and column and what
    /// was expected (code <see cref="BadSystem"/> and the expression codes), a variable without an equation
    /// (<see cref="MissingEquation"/>), a system without μ (<see cref="NoMu"/>), and an observable that is missing or
    /// not a variable (<see cref="BadObservable"/>).
    /// </summary>
    /// <param name="text">E.g. <c>v' = mu + v - v^3/3 - w; w' = e*(v + a - b*w)</c>.</param>
    /// <param name="observe">The recorded variable, e.g. <c>v</c>; null when not given.</param>
    /// <param name="source">What to name as the file in diagnostics.</param>
    public static Loaded<PlanarModel> Parse(string text, string? observe, string source = "--model")
    {
        ArgumentNullException.ThrowIfNull(text);
        if (text.Length > 2 * ModelExpression.MaxLength)
        {
            return Fail(new Diagnostic(Severity.Error, "expression-too-long", string.Create(CultureInfo.InvariantCulture,
                $"the system has {text.Length} characters, more than the {2 * ModelExpression.MaxLength} allowed (docs/model-expressions.md); write it shorter"), source));
        }

        var statements = Split(text);
        if (statements.Count != 2)
        {
            var at = statements.Count > 2 ? statements[2] : default;
            return Fail(new Diagnostic(Severity.Error, BadSystem,
                statements.Count > 2
                    ? $"statement 3, column {at.Column}: a planar system has exactly two equations, one per variable, but {statements.Count} statements were given"
                    : $"a planar system needs two equations, one per variable, e.g. \"v' = mu + v - v^3/3 - w; w' = e*(v + a - b*w)\"; {(statements.Count == 0 ? "none was" : "only one was")} given (separate them with ';' or a line break)",
                source, statements.Count > 2 && at.Lines > 1 ? at.Line : null, statements.Count > 2 ? at.Column : null));
        }

        var names = new string[2];
        var rhs = new (string Text, int Offset, Statement At)[2];
        for (var k = 0; k < 2; k++)
        {
            var s = statements[k];
            var head = ReadHead(s, k + 1, source, out var name, out var rhsStart);
            if (head is not null)
            {
                return Fail(head);
            }

            names[k] = name;
            rhs[k] = (s.Text[rhsStart..], s.Column - 1 + rhsStart, s);
        }

        if (names[0] == names[1])
        {
            var s = statements[1];
            return Fail(new Diagnostic(Severity.Error, MissingEquation,
                $"statement 2, column {s.Column}: '{names[1]}' is given a second equation, so the other variable has none; write one equation for each of the two variables",
                source, s.Lines > 1 ? s.Line : null, s.Column));
        }

        var equations = new ModelExpression[2];
        for (var k = 0; k < 2; k++)
        {
            var (body, offset, at) = rhs[k];
            var parsed = ModelExpression.ParseRightHandSide(body, names, offset, source);
            if (parsed.Value is null)
            {
                var d = parsed.Diagnostics[0];
                return Fail(d with { Message = $"statement {k + 1}, " + d.Message, Line = at.Lines > 1 ? at.Line : null });
            }

            equations[k] = parsed.Value;
        }

        var parameters = equations.SelectMany(e => e.Parameters).Distinct().ToList();
        foreach (var p in parameters)
        {
            if (LooksLikeVariable(p, names) is { } hint)
            {
                // A name like the variables' (a third variable without an equation) would silently become a constant.
                var (k, col) = Locate(statements, rhs, p);
                return Fail(new Diagnostic(Severity.Error, MissingEquation,
                    $"statement {k + 1}, column {col}: '{p}' has no equation of its own; the system's variables are {names[0]} and {names[1]} ({hint}). A name without an equation is fitted as a constant parameter; rename it if it is one",
                    source, statements[k].Lines > 1 ? statements[k].Line : null, col));
            }
        }

        if (!equations.Any(e => e.UsesMu))
        {
            return Fail(new Diagnostic(Severity.Error, NoMu,
                "the system does not use the control parameter 'mu' in either equation, so it cannot be mapped to the runs' parameter (μ_model = c0 + c1·μ_lab) and has no onset; write mu where the drive enters, e.g. v' = mu + v - v^3/3 - w",
                source));
        }

        if (string.IsNullOrWhiteSpace(observe))
        {
            return Fail(new Diagnostic(Severity.Error, BadObservable,
                $"a system needs the variable that was recorded: add --observe {names[0]} (or {names[1]}) for a single-signal recording",
                "--observe"));
        }

        var observed = observe.Split(',', StringSplitOptions.TrimEntries);
        if (observed.Length != 1)
        {
            return Fail(new Diagnostic(Severity.Error, BadObservable,
                $"'{observe}': comparing a system with positions (two recorded variables) is not supported yet; record one variable as a signal and give --observe {names[0]} or --observe {names[1]}",
                "--observe"));
        }

        var index = Array.IndexOf(names, observed[0]);
        if (index < 0)
        {
            return Fail(new Diagnostic(Severity.Error, BadObservable,
                $"'{observed[0]}' is not a variable of the system; its variables are {names[0]} and {names[1]}",
                "--observe"));
        }

        return new Loaded<PlanarModel>(new PlanarModel(text, names, equations, parameters, index), []);
    }

    /// <summary>A field of this system for one thread, at parameter values (order of <see cref="Parameters"/>) and μ_model.</summary>
    public Field CreateField(double[] parameters, double mu) => new(this, parameters, mu);

    /// <summary>The system's rates at fixed parameters and μ (compiled right-hand sides; safe to share between threads only without setting <see cref="Mu"/>).</summary>
    public sealed class Field : Numerics.IPlanarField
    {
        private readonly Func<double, double, double, double[], double> first;
        private readonly Func<double, double, double, double[], double> second;
        private readonly double[] p0;
        private readonly double[] p1;

        internal Field(PlanarModel model, double[] parameters, double mu)
        {
            (first, second) = model.compiled.Value;
            p0 = [.. model.parameterIndex[0].Select(i => parameters[i])];
            p1 = [.. model.parameterIndex[1].Select(i => parameters[i])];
            Mu = mu;
        }

        /// <summary>μ_model.</summary>
        public double Mu { get; set; }

        /// <inheritdoc/>
        public void Rate(double x0, double x1, out double rate0, out double rate1)
        {
            rate0 = first(x0, x1, Mu, p0);
            rate1 = second(x0, x1, Mu, p1);
        }
    }

    private static Loaded<PlanarModel> Fail(Diagnostic d) => Loaded.Fail<PlanarModel>(d);

    /// <summary>A single letter other than the variables' that sits next to one of them in the alphabet or shares its letter (x, y after x; v1 beside v), a likely third variable.</summary>
    private static string? LooksLikeVariable(string p, string[] names)
    {
        foreach (var n in names)
        {
            if (p.Length > 1 && n.Length >= 1 && p.StartsWith(n, StringComparison.Ordinal) && p[n.Length..].All(char.IsAsciiDigit))
            {
                return $"'{p}' looks like a variant of {n}";
            }
        }

        return p is "x" or "y" or "z" && names.Any(n => n is "x" or "y" or "z")
            ? $"'{p}' looks like a coordinate beside {string.Join(" and ", names.Where(n => n is "x" or "y" or "z"))}"
            : null;
    }

    private static (int Statement, int Column) Locate(List<Statement> statements, (string Text, int Offset, Statement At)[] rhs, string name)
    {
        for (var k = 0; k < rhs.Length; k++)
        {
            var t = rhs[k].Text;
            for (var i = t.IndexOf(name, StringComparison.Ordinal); i >= 0; i = t.IndexOf(name, i + 1, StringComparison.Ordinal))
            {
                var before = i == 0 || !(char.IsLetterOrDigit(t[i - 1]) || t[i - 1] == '_');
                var end = i + name.Length;
                var after = end >= t.Length || !(char.IsLetterOrDigit(t[end]) || t[end] == '_');
                if (before && after)
                {
                    return (k, rhs[k].Offset + i + 1);
                }
            }
        }

        return (0, statements[0].Column);
    }

    /// <summary>One statement: its text, 1-based line, the 1-based column of its first character in that line, and the number of lines of the whole text.</summary>
    private readonly record struct Statement(string Text, int Line, int Column, int Lines);

    /// <summary>Non-blank statements separated by ';' or line breaks.</summary>
    private static List<Statement> Split(string text)
    {
        var lines = text.Split('\n');
        var found = new List<Statement>();
        for (var l = 0; l < lines.Length; l++)
        {
            var line = lines[l].TrimEnd('\r');
            var start = 0;
            for (var i = 0; i <= line.Length; i++)
            {
                if (i == line.Length || line[i] == ';')
                {
                    var piece = line[start..i];
                    var lead = piece.Length - piece.TrimStart().Length;
                    if (piece.Trim().Length > 0)
                    {
                        found.Add(new Statement(piece[lead..], l + 1, start + lead + 1, lines.Length));
                    }

                    start = i + 1;
                }
            }
        }

        return found;
    }

    /// <summary>Reads <c>name' =</c>; null when it is there, else the error.</summary>
    private static Diagnostic? ReadHead(Statement s, int number, string source, out string name, out int rhsStart)
    {
        var t = s.Text;
        var i = 0;
        name = string.Empty;
        rhsStart = 0;
        Diagnostic Error(int at, string what) => new(Severity.Error, BadSystem,
            string.Create(CultureInfo.InvariantCulture, $"statement {number}, column {s.Column + at}: {what}"),
            source, s.Lines > 1 ? s.Line : null, s.Column + at);

        if (i >= t.Length || !(char.IsAsciiLetter(t[i]) || t[i] == '_'))
        {
            return Error(i, $"expected the name of a variable, e.g. v' = …, but found '{t[i]}'");
        }

        while (i < t.Length && (char.IsAsciiLetterOrDigit(t[i]) || t[i] == '_'))
        {
            i++;
        }

        name = t[..i];
        if (name is "mu" or "theta" or "pi" or "c0" or "c1" || ExpressionParser.Functions.Contains(name))
        {
            return Error(0, $"'{name}' is a reserved name and cannot be a variable; name the variables otherwise, e.g. v and w");
        }

        while (i < t.Length && t[i] == ' ')
        {
            i++;
        }

        if (i >= t.Length || t[i] != '\'')
        {
            return Error(i, $"expected a prime after the variable name ({name}' = …) but found {(i >= t.Length ? "the end of the statement" : $"'{t[i]}'")}; a system is written as two equations name' = expression");
        }

        i++;
        while (i < t.Length && t[i] == ' ')
        {
            i++;
        }

        if (i >= t.Length || t[i] != '=')
        {
            return Error(i, $"expected '=' after {name}' but found {(i >= t.Length ? "the end of the statement" : $"'{t[i]}'")}");
        }

        rhsStart = i + 1;
        return null;
    }
}
