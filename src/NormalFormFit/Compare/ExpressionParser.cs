using System.Globalization;
using OpCode = NormalFormFit.Compare.ModelExpression.OpCode;
using Instruction = NormalFormFit.Compare.ModelExpression.Instruction;

namespace NormalFormFit.Compare;

/// <summary>
/// Recursive-descent parser with precedence climbing (Clarke 1986; Richards 1979) for the model-expression language,
/// emitting postfix code as it goes. Grammar, loosest binding first:
/// <code>
/// sum     := product (('+' | '-') product)*          left-associative
/// product := signed (('*' | '/') signed)*            left-associative
/// signed  := ('-' | '+') signed | power               so -x^2 = -(x^2)
/// power   := atom ('^' signed)?                       right-associative: 2^3^2 = 2^(3^2); 2^-1 allowed
/// atom    := number | name | function '(' sum ')' | '(' sum ')'
/// </code>
/// Every error names the 1-based position of the offending character and what was expected there.
/// </summary>
internal sealed class ExpressionParser
{
    /// <summary>The functions of the language.</summary>
    public static readonly string[] Functions = ["sin", "cos", "tan", "exp", "log", "sqrt", "abs", "tanh", "cosh"];

    private const string ErrorCode = "bad-expression";
    private const int MaxNesting = 200;

    private readonly string text;
    private readonly string source;
    private readonly List<Instruction> code = [];
    private readonly List<string> parameters = [];
    private int pos;
    private int depth;
    private int maxDepth;
    private int nesting;
    private readonly IReadOnlyList<string>? variables;
    private readonly int columnOffset;
    private bool usesMu;
    private bool usesTheta;
    private int usesVariables;

    private ExpressionParser(string text, string source, IReadOnlyList<string>? variables, int columnOffset)
    {
        this.text = text;
        this.source = source;
        this.variables = variables;
        this.columnOffset = columnOffset;
    }

    internal sealed record Result(
        Instruction[]? Program,
        int MaxDepth,
        IReadOnlyList<string> Parameters,
        bool UsesMu,
        bool UsesTheta,
        Diagnostic? Error)
    {
        /// <summary>Bit k set when the system variable k is used (right-hand sides of a planar system only).</summary>
        public int UsesVariables { get; init; }
    }

    public static Result Parse(string text, string source) => Parse(text, source, null, 0);

    /// <summary>
    /// Parses <paramref name="text"/>; with <paramref name="variables"/>, the right-hand side of one equation of a planar
    /// system, where those names are the state variables and <c>theta</c> has no meaning. Error columns are shifted by
    /// <paramref name="columnOffset"/> (the right-hand side's place in the whole line).
    /// </summary>
    public static Result Parse(string text, string source, IReadOnlyList<string>? variables, int columnOffset)
    {
        var p = new ExpressionParser(text, source, variables, columnOffset);
        try
        {
            p.SkipBlanks();
            if (p.pos >= text.Length)
            {
                throw p.Fail(p.pos, variables is null
                    ? "the expression is empty; write the phase velocity, e.g. mu - a*sin(theta)"
                    : "the right-hand side is empty; write the rate of change after '=', e.g. v' = mu + v - v^3/3 - w");
            }

            p.Sum();
            p.SkipBlanks();
            if (p.pos < text.Length)
            {
                throw p.Fail(p.pos, $"expected an operator (+ - * / ^) or the end of the expression but found {p.Describe(p.pos)}");
            }

            return new Result([.. p.code], p.maxDepth, p.parameters, p.usesMu, p.usesTheta, null) { UsesVariables = p.usesVariables };
        }
        catch (SyntaxError e)
        {
            return new Result(null, 0, [], false, false, e.Diagnostic);
        }
    }

    private void Sum()
    {
        Product();
        while (TryOperator('+', '-', out var op))
        {
            Product();
            Emit(new Instruction(op == '+' ? OpCode.Add : OpCode.Subtract), -1);
        }
    }

    private void Product()
    {
        Signed();
        while (TryOperator('*', '/', out var op))
        {
            Signed();
            Emit(new Instruction(op == '*' ? OpCode.Multiply : OpCode.Divide), -1);
        }
    }

    private void Signed()
    {
        SkipBlanks();
        if (pos < text.Length && (text[pos] == '-' || text[pos] == '+'))
        {
            var negative = text[pos] == '-';
            pos++;
            Enter();
            Signed();
            nesting--;
            if (negative)
            {
                Emit(new Instruction(OpCode.Negate), 0);
            }

            return;
        }

        Power();
    }

    private void Power()
    {
        Atom();
        SkipBlanks();
        if (pos < text.Length && text[pos] == '^')
        {
            pos++;
            Enter();
            Signed();
            nesting--;
            Emit(new Instruction(OpCode.Power), -1);
        }
    }

    private void Atom()
    {
        SkipBlanks();
        if (pos >= text.Length)
        {
            throw Fail(pos, "the expression ends too early: expected a number, a name or '('");
        }

        var c = text[pos];
        if (char.IsAsciiDigit(c) || c == '.')
        {
            Number();
            return;
        }

        if (char.IsAsciiLetter(c) || c == '_' || c == 'θ' || c == 'μ')
        {
            Name();
            return;
        }

        if (c == '(')
        {
            var open = pos;
            pos++;
            Enter();
            Sum();
            nesting--;
            Close(open);
            return;
        }

        if (c == '*' && pos > 0 && text[pos - 1] == '*')
        {
            throw Fail(pos - 1, "'**' is not an operator here: write a power with '^', e.g. sin(theta)^2");
        }

        throw Fail(pos, $"expected a number, a name or '(' but found {Describe(pos)}");
    }

    private void Number()
    {
        var start = pos;
        while (pos < text.Length && char.IsAsciiDigit(text[pos]))
        {
            pos++;
        }

        if (pos < text.Length && text[pos] == '.')
        {
            pos++;
            while (pos < text.Length && char.IsAsciiDigit(text[pos]))
            {
                pos++;
            }
        }

        if (pos - start == 1 && text[start] == '.')
        {
            throw Fail(start, "expected a digit before or after '.' (write 0.5 or .5)");
        }

        if (pos < text.Length && (text[pos] == 'e' || text[pos] == 'E'))
        {
            var mark = pos;
            pos++;
            if (pos < text.Length && (text[pos] == '+' || text[pos] == '-'))
            {
                pos++;
            }

            if (pos >= text.Length || !char.IsAsciiDigit(text[pos]))
            {
                throw Fail(pos, $"expected the digits of the exponent after '{text[mark]}' (e.g. 1e-3) but found {Describe(pos)}");
            }

            while (pos < text.Length && char.IsAsciiDigit(text[pos]))
            {
                pos++;
            }
        }

        if (pos < text.Length && (char.IsAsciiLetter(text[pos]) || text[pos] == '_' || text[pos] == '('))
        {
            throw Fail(pos, $"expected an operator after the number {text[start..pos]} but found {Describe(pos)} (write 2*x, not 2x)");
        }

        var value = double.Parse(text.AsSpan(start, pos - start), NumberStyles.Float, CultureInfo.InvariantCulture);
        if (!double.IsFinite(value))
        {
            throw Fail(start, $"the number {text[start..pos]} is too large");
        }

        Emit(new Instruction(OpCode.Number, value), 1);
    }

    private void Name()
    {
        var start = pos;
        if (text[pos] == 'θ' || text[pos] == 'μ')
        {
            pos++;
        }
        else
        {
            while (pos < text.Length && (char.IsAsciiLetterOrDigit(text[pos]) || text[pos] == '_'))
            {
                pos++;
            }
        }

        var name = text[start..pos];
        SkipBlanks();
        var call = pos < text.Length && text[pos] == '(';
        var function = Array.IndexOf(Functions, name);
        if (call)
        {
            if (function < 0)
            {
                throw Fail(start, $"unknown function '{name}'; the functions are {string.Join(", ", Functions)}");
            }

            var open = pos;
            pos++;
            Enter();
            SkipBlanks();
            if (pos < text.Length && text[pos] == ')')
            {
                throw Fail(pos, $"expected an argument for {name}( but found ')'");
            }

            Sum();
            nesting--;
            Close(open);
            Emit(new Instruction(OpCode.Sin + function), 0);
            return;
        }

        if (function >= 0)
        {
            throw Fail(pos, $"expected '(' after the function name '{name}' but found {Describe(pos)}");
        }

        var variable = variables is null ? -1 : IndexOf(variables, name);
        if (variable >= 0)
        {
            usesVariables |= 1 << variable;
            Emit(new Instruction(OpCode.Variable, Index: variable), 1);
            return;
        }

        if (variables is not null && name is "theta" or "θ")
        {
            throw Fail(start, $"'theta' is the phase of a one-equation phase model; in a system the variables are {string.Join(" and ", variables)}");
        }

        switch (name)
        {
            case "theta" or "θ":
                usesTheta = true;
                Emit(new Instruction(OpCode.Theta), 1);
                break;
            case "mu" or "μ":
                usesMu = true;
                Emit(new Instruction(OpCode.Mu), 1);
                break;
            case "pi":
                Emit(new Instruction(OpCode.Number, Math.PI), 1);
                break;
            default:
                var index = parameters.IndexOf(name);
                if (index < 0)
                {
                    index = parameters.Count;
                    parameters.Add(name);
                }

                Emit(new Instruction(OpCode.Parameter, Index: index), 1);
                break;
        }
    }

    private static int IndexOf(IReadOnlyList<string> names, string name)
    {
        for (var i = 0; i < names.Count; i++)
        {
            if (names[i] == name)
            {
                return i;
            }
        }

        return -1;
    }

    private void Close(int open)
    {
        SkipBlanks();
        if (pos >= text.Length)
        {
            throw Fail(pos, $"expected ')' to close the '(' at column {open + 1 + columnOffset} but the expression ends");
        }

        if (text[pos] != ')')
        {
            throw Fail(pos, $"expected ')' to close the '(' at column {open + 1 + columnOffset} but found {Describe(pos)}");
        }

        pos++;
    }

    private bool TryOperator(char first, char second, out char op)
    {
        SkipBlanks();
        op = pos < text.Length ? text[pos] : '\0';
        if (op != first && op != second)
        {
            return false;
        }

        pos++;
        return true;
    }

    private void Enter()
    {
        if (++nesting > MaxNesting)
        {
            throw Fail(pos, $"the expression nests deeper than {MaxNesting} levels");
        }
    }

    private void Emit(Instruction instruction, int stackChange)
    {
        code.Add(instruction);
        depth += stackChange;
        maxDepth = Math.Max(maxDepth, depth);
    }

    private void SkipBlanks()
    {
        while (pos < text.Length && char.IsWhiteSpace(text[pos]))
        {
            pos++;
        }
    }

    private string Describe(int at)
    {
        if (at >= text.Length)
        {
            return "the end of the expression";
        }

        var c = text[at];
        if (char.IsAsciiLetter(c) || c == '_')
        {
            var end = at;
            while (end < text.Length && (char.IsAsciiLetterOrDigit(text[end]) || text[end] == '_'))
            {
                end++;
            }

            return $"'{text[at..end]}'";
        }

        return char.IsControl(c) || char.IsWhiteSpace(c)
            ? string.Create(CultureInfo.InvariantCulture, $"the character U+{(int)c:X4}")
            : $"'{c}'";
    }

    private SyntaxError Fail(int at, string message) =>
        new(new Diagnostic(
            Severity.Error,
            ErrorCode,
            string.Create(CultureInfo.InvariantCulture, $"column {at + 1 + columnOffset}: {message}"),
            source,
            Line: null,
            Column: at + 1 + columnOffset));

    private sealed class SyntaxError(Diagnostic diagnostic) : Exception(diagnostic.Message)
    {
        public Diagnostic Diagnostic { get; } = diagnostic;
    }
}
