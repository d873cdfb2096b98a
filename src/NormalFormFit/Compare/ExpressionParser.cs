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
    public static readonly string[] Functions = ["sin", "cos", "tan", "exp", "log", "sqrt", "abs"];

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
    private bool usesMu;
    private bool usesTheta;

    private ExpressionParser(string text, string source)
    {
        this.text = text;
        this.source = source;
    }

    internal sealed record Result(
        Instruction[]? Program,
        int MaxDepth,
        IReadOnlyList<string> Parameters,
        bool UsesMu,
        bool UsesTheta,
        Diagnostic? Error);

    public static Result Parse(string text, string source)
    {
        var p = new ExpressionParser(text, source);
        try
        {
            p.SkipBlanks();
            if (p.pos >= text.Length)
            {
                throw p.Fail(p.pos, "the expression is empty; write the phase velocity, e.g. mu - a*sin(theta)");
            }

            p.Sum();
            p.SkipBlanks();
            if (p.pos < text.Length)
            {
                throw p.Fail(p.pos, $"expected an operator (+ - * / ^) or the end of the expression but found {p.Describe(p.pos)}");
            }

            return new Result([.. p.code], p.maxDepth, p.parameters, p.usesMu, p.usesTheta, null);
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

    private void Close(int open)
    {
        SkipBlanks();
        if (pos >= text.Length)
        {
            throw Fail(pos, $"expected ')' to close the '(' at column {open + 1} but the expression ends");
        }

        if (text[pos] != ')')
        {
            throw Fail(pos, $"expected ')' to close the '(' at column {open + 1} but found {Describe(pos)}");
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
            string.Create(CultureInfo.InvariantCulture, $"column {at + 1}: {message}"),
            source,
            Line: null,
            Column: at + 1));

    private sealed class SyntaxError(Diagnostic diagnostic) : Exception(diagnostic.Message)
    {
        public Diagnostic Diagnostic { get; } = diagnostic;
    }
}
