using System.Globalization;
using NormalFormFit.Ingest;

namespace NormalFormFit.Compare;

/// <summary>
/// A user's phase model θ̇ = f(θ, μ; p) written in the expression syntax of docs/model-expressions.md, compiled to a
/// small postfix (stack) program. Nothing but arithmetic is ever executed: the program holds numbers, the variables
/// <c>theta</c> and <c>mu</c>, free parameters, the operators + − × ÷ ^ and seven functions.
/// </summary>
/// <remarks>
/// Evaluation with derivatives is forward-mode automatic differentiation: every stack slot carries its value and its
/// partial derivatives with respect to each free parameter and μ (Wengert 1964; Griewank &amp; Walther 2008, ch. 3).
/// Cost O(program length × (parameters + 1)) per point. Instances are immutable and thread-safe; scratch space is
/// allocated per call or supplied by the caller through <see cref="Evaluator"/>.
/// </remarks>
public sealed class ModelExpression
{
    private readonly Instruction[] program;
    private readonly int maxDepth;

    private ModelExpression(string text, Instruction[] program, int maxDepth, IReadOnlyList<string> parameters, bool usesMu, bool usesTheta, int usesVariables = 0)
    {
        UsesVariables = usesVariables;
        Text = text;
        this.program = program;
        this.maxDepth = maxDepth;
        Parameters = parameters;
        UsesMu = usesMu;
        UsesTheta = usesTheta;
    }

    /// <summary>The expression as the user wrote it.</summary>
    public string Text { get; }

    /// <summary>Free parameters, in the order of their first appearance.</summary>
    public IReadOnlyList<string> Parameters { get; }

    /// <summary>True when the expression contains <c>mu</c>.</summary>
    public bool UsesMu { get; }

    /// <summary>True when the expression contains <c>theta</c>.</summary>
    public bool UsesTheta { get; }

    /// <summary>For the right-hand side of a planar system's equation: bit k set when state variable k appears.</summary>
    public int UsesVariables { get; }

    /// <summary>Longest expression, in characters (docs/model-expressions.md).</summary>
    public const int MaxLength = 1000;

    /// <summary>Most operations (numbers, names, operators and function calls) in an expression: bounds the cost of one evaluation.</summary>
    public const int MaxNodes = 300;

    /// <summary>Names the language reserves: variables, constants and functions.</summary>
    public static IReadOnlyList<string> Reserved { get; } = ["theta", "mu", "pi", .. ExpressionParser.Functions];

    /// <summary>
    /// Parses <paramref name="text"/>. On a syntax error the result has no value and one error diagnostic whose
    /// <see cref="Diagnostic.Column"/> is the 1-based position of the offending character.
    /// </summary>
    /// <param name="text">The expression, e.g. <c>mu - a*sin(theta)</c>.</param>
    /// <param name="source">What to name as the file in diagnostics, e.g. <c>--model</c>.</param>
    public static Loaded<ModelExpression> Parse(string text, string source = "--model")
    {
        ArgumentNullException.ThrowIfNull(text);
        if (text.Length > MaxLength)
        {
            return Loaded.Fail<ModelExpression>(new Diagnostic(Severity.Error, "expression-too-long",
                $"the expression has {text.Length} characters, more than the {MaxLength} allowed (docs/model-expressions.md); write the model shorter", source));
        }

        var parsed = ExpressionParser.Parse(text, source);
        if (parsed.Program is null)
        {
            return Loaded.Fail<ModelExpression>(parsed.Error!);
        }

        if (parsed.Program.Length > MaxNodes)
        {
            return Loaded.Fail<ModelExpression>(new Diagnostic(Severity.Error, "expression-too-long",
                $"the expression has {parsed.Program.Length} operations, more than the {MaxNodes} allowed (each is evaluated millions of times in a comparison; docs/model-expressions.md); write the model shorter", source));
        }

        return new Loaded<ModelExpression>(
            new ModelExpression(text, parsed.Program, parsed.MaxDepth, parsed.Parameters, parsed.UsesMu, parsed.UsesTheta),
            []);
    }

    /// <summary>
    /// Parses the right-hand side of one equation of a planar system (<see cref="PlanarModel"/>), in which the names
    /// <paramref name="variables"/> are the state variables. Error columns count from the start of the whole line
    /// (<paramref name="columnOffset"/> is where the right-hand side starts in it, 0-based).
    /// </summary>
    internal static Loaded<ModelExpression> ParseRightHandSide(string text, IReadOnlyList<string> variables, int columnOffset, string source)
    {
        var parsed = ExpressionParser.Parse(text, source, variables, columnOffset);
        if (parsed.Program is null)
        {
            return Loaded.Fail<ModelExpression>(parsed.Error!);
        }

        if (parsed.Program.Length > MaxNodes)
        {
            return Loaded.Fail<ModelExpression>(new Diagnostic(Severity.Error, "expression-too-long",
                $"a right-hand side has {parsed.Program.Length} operations, more than the {MaxNodes} allowed (docs/model-expressions.md); write it shorter", source));
        }

        return new Loaded<ModelExpression>(
            new ModelExpression(text, parsed.Program, parsed.MaxDepth, parsed.Parameters, parsed.UsesMu, parsed.UsesTheta, parsed.UsesVariables), []);
    }

    /// <summary>
    /// The right-hand side compiled to a delegate f(x₀, x₁, μ, p) (System.Linq.Expressions: the postfix program turned
    /// into an expression tree of the same arithmetic, then compiled), for the millions of evaluations of an
    /// integration. Same operations in the same order as <see cref="Evaluator.EvaluateState"/>, so the same values.
    /// </summary>
    internal Func<double, double, double, double[], double> CompileState()
    {
        var x0 = System.Linq.Expressions.Expression.Parameter(typeof(double), "x0");
        var x1 = System.Linq.Expressions.Expression.Parameter(typeof(double), "x1");
        var mu = System.Linq.Expressions.Expression.Parameter(typeof(double), "mu");
        var p = System.Linq.Expressions.Expression.Parameter(typeof(double[]), "p");
        var stack = new Stack<System.Linq.Expressions.Expression>();
        System.Linq.Expressions.Expression Call(string name, params System.Linq.Expressions.Expression[] args) =>
            System.Linq.Expressions.Expression.Call(typeof(Math).GetMethod(name, [.. args.Select(_ => typeof(double))])!, args);
        foreach (var ins in program)
        {
            switch (ins.Op)
            {
                case OpCode.Number:
                    stack.Push(System.Linq.Expressions.Expression.Constant(ins.Value));
                    break;
                case OpCode.Theta:
                    stack.Push(x0);
                    break;
                case OpCode.Variable:
                    stack.Push(ins.Index == 0 ? x0 : x1);
                    break;
                case OpCode.Mu:
                    stack.Push(mu);
                    break;
                case OpCode.Parameter:
                    stack.Push(System.Linq.Expressions.Expression.ArrayIndex(p, System.Linq.Expressions.Expression.Constant(ins.Index)));
                    break;
                case OpCode.Negate:
                    stack.Push(System.Linq.Expressions.Expression.Negate(stack.Pop()));
                    break;
                case >= OpCode.Add and <= OpCode.Power:
                    var b = stack.Pop();
                    var a = stack.Pop();
                    stack.Push(ins.Op switch
                    {
                        OpCode.Add => System.Linq.Expressions.Expression.Add(a, b),
                        OpCode.Subtract => System.Linq.Expressions.Expression.Subtract(a, b),
                        OpCode.Multiply => System.Linq.Expressions.Expression.Multiply(a, b),
                        OpCode.Divide => System.Linq.Expressions.Expression.Divide(a, b),
                        _ => Call(nameof(Math.Pow), a, b),
                    });
                    break;
                default:
                    stack.Push(Call(ins.Op.ToString(), stack.Pop()));
                    break;
            }
        }

        return System.Linq.Expressions.Expression.Lambda<Func<double, double, double, double[], double>>(stack.Pop(), x0, x1, mu, p).Compile();
    }

    /// <summary>f(θ, μ; p).</summary>
    /// <param name="theta">Phase θ.</param>
    /// <param name="mu">Model parameter μ.</param>
    /// <param name="parameters">Values in the order of <see cref="Parameters"/>.</param>
    public double Evaluate(double theta, double mu, ReadOnlySpan<double> parameters) =>
        CreateEvaluator().Evaluate(theta, mu, parameters, []);

    /// <summary>A scratch-holding evaluator for many calls on one thread.</summary>
    public Evaluator CreateEvaluator() => new(this);

    /// <summary>Writes the program in postfix form, for tests and <c>--verbose</c> output.</summary>
    public string ToPostfix() => string.Join(' ', program.Select(i => i.ToString(Parameters)));

    /// <inheritdoc/>
    public override string ToString() => Text;

    /// <summary>Evaluates one expression with reusable scratch space. Not thread-safe: one per thread.</summary>
    public sealed class Evaluator
    {
        private readonly ModelExpression owner;
        private readonly double[] values;
        private double[] gradients;

        internal Evaluator(ModelExpression owner)
        {
            this.owner = owner;
            values = new double[Math.Max(owner.maxDepth, 1)];
            gradients = [];
        }

        /// <summary>
        /// f(θ, μ; p) and, when <paramref name="gradient"/> is not empty, its partial derivatives: ∂f/∂pₖ in
        /// gradient[k] for k &lt; P and ∂f/∂μ in gradient[P]. The span must then have length P + 1.
        /// </summary>
        /// <param name="theta">Phase θ.</param>
        /// <param name="mu">Model parameter μ.</param>
        /// <param name="parameters">Values in the order of <see cref="Parameters"/>.</param>
        /// <param name="gradient">Empty, or P + 1 slots to receive the derivatives.</param>
        /// <returns>f.</returns>
        public double Evaluate(double theta, double mu, ReadOnlySpan<double> parameters, Span<double> gradient) =>
            Run(theta, 0.0, mu, parameters, gradient);

        /// <summary>The right-hand side of one equation of a planar system at state (<paramref name="x0"/>, <paramref name="x1"/>), without derivatives.</summary>
        /// <param name="x0">The system's first variable.</param>
        /// <param name="x1">The system's second variable.</param>
        /// <param name="mu">Model parameter μ.</param>
        /// <param name="parameters">Values in the order of <see cref="Parameters"/>.</param>
        /// <returns>The rate.</returns>
        public double EvaluateState(double x0, double x1, double mu, ReadOnlySpan<double> parameters) =>
            Run(x0, x1, mu, parameters, []);

        private double Run(double theta, double second, double mu, ReadOnlySpan<double> parameters, Span<double> gradient)
        {
            var pCount = owner.Parameters.Count;
            if (parameters.Length != pCount)
            {
                throw new ArgumentException($"Expected {pCount} parameter values, got {parameters.Length}.", nameof(parameters));
            }

            var withGradient = !gradient.IsEmpty;
            if (withGradient && gradient.Length != pCount + 1)
            {
                throw new ArgumentException($"The gradient needs {pCount + 1} slots, got {gradient.Length}.", nameof(gradient));
            }

            var g = pCount + 1;
            if (withGradient && gradients.Length < values.Length * g)
            {
                gradients = new double[values.Length * g];
            }

            var sp = 0;
            foreach (var ins in owner.program)
            {
                switch (ins.Op)
                {
                    case OpCode.Number:
                        Push(ref sp, ins.Value, -1, withGradient, g);
                        break;
                    case OpCode.Theta:
                        Push(ref sp, theta, -1, withGradient, g);
                        break;
                    case OpCode.Mu:
                        Push(ref sp, mu, pCount, withGradient, g);
                        break;
                    case OpCode.Variable:
                        Push(ref sp, ins.Index == 0 ? theta : second, -1, withGradient, g);
                        break;
                    case OpCode.Parameter:
                        Push(ref sp, parameters[ins.Index], ins.Index, withGradient, g);
                        break;
                    case OpCode.Negate:
                        values[sp - 1] = -values[sp - 1];
                        if (withGradient)
                        {
                            Scale(sp - 1, -1.0, g);
                        }

                        break;
                    default:
                        if (ins.Op >= OpCode.Add && ins.Op <= OpCode.Power)
                        {
                            sp--;
                            Binary(ins.Op, sp - 1, sp, withGradient, g);
                        }
                        else
                        {
                            Unary(ins.Op, sp - 1, withGradient, g);
                        }

                        break;
                }
            }

            if (withGradient)
            {
                gradients.AsSpan(0, g).CopyTo(gradient);
            }

            return values[0];
        }

        private void Push(ref int sp, double value, int seed, bool withGradient, int g)
        {
            values[sp] = value;
            if (withGradient)
            {
                var slot = gradients.AsSpan(sp * g, g);
                slot.Clear();
                if (seed >= 0)
                {
                    slot[seed] = 1.0;
                }
            }

            sp++;
        }

        private void Scale(int slot, double factor, int g)
        {
            var s = gradients.AsSpan(slot * g, g);
            for (var k = 0; k < g; k++)
            {
                s[k] *= factor;
            }
        }

        // Unary chain rule: d u(a) = u'(a) da.
        private void Unary(OpCode op, int slot, bool withGradient, int g)
        {
            var a = values[slot];
            double value, slope;
            switch (op)
            {
                case OpCode.Sin:
                    value = Math.Sin(a);
                    slope = Math.Cos(a);
                    break;
                case OpCode.Cos:
                    value = Math.Cos(a);
                    slope = -Math.Sin(a);
                    break;
                case OpCode.Tan:
                    value = Math.Tan(a);
                    slope = 1.0 + (value * value);
                    break;
                case OpCode.Exp:
                    value = Math.Exp(a);
                    slope = value;
                    break;
                case OpCode.Log:
                    value = Math.Log(a);
                    slope = 1.0 / a;
                    break;
                case OpCode.Sqrt:
                    value = Math.Sqrt(a);
                    slope = 0.5 / value;
                    break;
                case OpCode.Abs:
                    value = Math.Abs(a);
                    slope = Math.Sign(a);
                    break;
                case OpCode.Tanh:
                    value = Math.Tanh(a);
                    slope = 1.0 - (value * value);
                    break;
                case OpCode.Cosh:
                    value = Math.Cosh(a);
                    slope = Math.Sinh(a);
                    break;
                default:
                    throw new InvalidOperationException($"Not a unary operation: {op}.");
            }

            values[slot] = value;
            if (withGradient)
            {
                Scale(slot, slope, g);
            }
        }

        private void Binary(OpCode op, int left, int right, bool withGradient, int g)
        {
            var a = values[left];
            var b = values[right];
            double value, da, db;
            switch (op)
            {
                case OpCode.Add:
                    value = a + b;
                    da = 1.0;
                    db = 1.0;
                    break;
                case OpCode.Subtract:
                    value = a - b;
                    da = 1.0;
                    db = -1.0;
                    break;
                case OpCode.Multiply:
                    value = a * b;
                    da = b;
                    db = a;
                    break;
                case OpCode.Divide:
                    value = a / b;
                    da = 1.0 / b;
                    db = -value / b;
                    break;
                case OpCode.Power:
                    value = Math.Pow(a, b);
                    da = b == 0.0 ? 0.0 : b * Math.Pow(a, b - 1.0);
                    db = withGradient && HasGradient(right, g) ? value * Math.Log(a) : 0.0;
                    break;
                default:
                    throw new InvalidOperationException($"Not a binary operation: {op}.");
            }

            values[left] = value;
            if (withGradient)
            {
                var l = gradients.AsSpan(left * g, g);
                var r = gradients.AsSpan(right * g, g);
                for (var k = 0; k < g; k++)
                {
                    // 0 × ∞ from an unused branch (e.g. d(a^b)/db at a = 0 with db = 0) must stay 0.
                    var fromLeft = l[k] == 0.0 ? 0.0 : da * l[k];
                    var fromRight = r[k] == 0.0 ? 0.0 : db * r[k];
                    l[k] = fromLeft + fromRight;
                }
            }
        }

        private bool HasGradient(int slot, int g)
        {
            foreach (var d in gradients.AsSpan(slot * g, g))
            {
                if (d != 0.0)
                {
                    return true;
                }
            }

            return false;
        }
    }

    internal enum OpCode
    {
        Number,
        Theta,
        Mu,
        Parameter,
        Negate,
        Add,
        Subtract,
        Multiply,
        Divide,
        Power,
        Sin,
        Cos,
        Tan,
        Exp,
        Log,
        Sqrt,
        Abs,
        Tanh,
        Cosh,
        Variable,
    }

    internal readonly record struct Instruction(OpCode Op, double Value = 0.0, int Index = -1)
    {
        public string ToString(IReadOnlyList<string> parameters) => Op switch
        {
            OpCode.Number => Value.ToString("R", CultureInfo.InvariantCulture),
            OpCode.Theta => "theta",
            OpCode.Mu => "mu",
            OpCode.Variable => string.Create(CultureInfo.InvariantCulture, $"x{Index}"),
            OpCode.Parameter => parameters[Index],
            OpCode.Negate => "neg",
            OpCode.Add => "+",
            OpCode.Subtract => "-",
            OpCode.Multiply => "*",
            OpCode.Divide => "/",
            OpCode.Power => "^",
            _ => Op.ToString().ToLowerInvariant(),
        };
    }
}
