using NormalFormFit.Compare;

namespace NormalFormFit.Tests.Compare;

/// <summary>The expression language of docs/model-expressions.md: precedence, signs, functions, errors.</summary>
public class ModelExpressionTests
{
    private static ModelExpression Parse(string text)
    {
        var parsed = ModelExpression.Parse(text);
        Assert.True(parsed.Succeeded, parsed.Diagnostics.Count > 0 ? parsed.Diagnostics[0].ToString() : null);
        return parsed.Value!;
    }

    private static double Eval(string text, double theta = 0.7, double mu = 1.3, params double[] p) =>
        Parse(text).Evaluate(theta, mu, p);

    // Expected values are the usual conventions of arithmetic (common practice, no source), computed by C# itself on
    // the same doubles: equality is exact unless the program reorders operations, hence a 1e-15 relative tolerance.
    [Theory]
    [InlineData("1 + 2 * 3", 7.0)]
    [InlineData("(1 + 2) * 3", 9.0)]
    [InlineData("8 / 4 / 2", 1.0)]
    [InlineData("10 - 4 - 3", 3.0)]
    [InlineData("2 ^ 3 ^ 2", 512.0)]
    [InlineData("-2 ^ 2", -4.0)]
    [InlineData("2 ^ -1", 0.5)]
    [InlineData("- -3", 3.0)]
    [InlineData("+3 - -2", 5.0)]
    [InlineData("2 * -3", -6.0)]
    [InlineData("1.5e2 + .5 + 2.", 152.5)]
    [InlineData("3 * 2 ^ 2", 12.0)]
    [InlineData("-(1 + 1) * 3", -6.0)]
    public void Arithmetic_FollowsUsualPrecedenceAndAssociativity(string text, double expected) =>
        Assert.Equal(expected, Eval(text), 1e-15 * Math.Max(1.0, Math.Abs(expected)));

    [Fact]
    public void Variables_Functions_AndParameters_EvaluateLikeTheDirectFormula()
    {
        const double theta = 0.7, mu = 1.3, a = 0.9, k = 0.25;
        var e = Parse("mu - a*sin(theta) + k*sin(2*theta) + sqrt(abs(cos(theta))) * exp(-log(2)) + tan(theta/4)");
        Assert.Equal(["a", "k"], e.Parameters);
        Assert.True(e.UsesMu);
        Assert.True(e.UsesTheta);
        var expected = mu - (a * Math.Sin(theta)) + (k * Math.Sin(2 * theta)) + (Math.Sqrt(Math.Abs(Math.Cos(theta))) * Math.Exp(-Math.Log(2))) + Math.Tan(theta / 4);
        Assert.Equal(expected, e.Evaluate(theta, mu, [a, k]), 1e-14);
    }

    [Fact]
    public void Pi_IsAConstant_AndGreekLettersAreAliases()
    {
        var e = Parse("μ - sin(θ + pi)");
        Assert.Empty(e.Parameters);
        Assert.Equal(1.3 - Math.Sin(0.7 + Math.PI), e.Evaluate(0.7, 1.3, []), 1e-15);
    }

    [Fact]
    public void Gradient_MatchesCentralDifferences()
    {
        // Forward-mode derivatives against central differences with step 1e-6: truncation error O(h²f''') ≈ 1e-12,
        // rounding error ≈ 1e-16/1e-6 = 1e-10, so agreement to 1e-7 tests the chain rules, not the arithmetic.
        var e = Parse("(mu*c - a*sin(theta)^2) / (1 + b^2) + exp(b*cos(theta)) - sqrt(a) * log(mu) + abs(b - a)^1.5 + a^b");
        double[] p = [0.8, 0.3, 1.7];
        var eval = e.CreateEvaluator();
        var grad = new double[4];
        var f = eval.Evaluate(0.4, 1.2, p, grad);
        Assert.Equal(e.Evaluate(0.4, 1.2, p), f);
        const double h = 1e-6;
        for (var k = 0; k < 3; k++)
        {
            var up = (double[])p.Clone();
            var down = (double[])p.Clone();
            up[k] += h;
            down[k] -= h;
            Assert.Equal((e.Evaluate(0.4, 1.2, up) - e.Evaluate(0.4, 1.2, down)) / (2 * h), grad[k], 1e-7);
        }

        Assert.Equal((e.Evaluate(0.4, 1.2 + h, p) - e.Evaluate(0.4, 1.2 - h, p)) / (2 * h), grad[3], 1e-7);
    }

    [Theory]
    [InlineData("mu - a*sin(theta", 17, "expected ')' to close the '(' at column 11")]
    [InlineData("mu - * theta", 6, "expected a number, a name or '('")]
    [InlineData("mu - sinh(theta)", 6, "unknown function 'sinh'")]
    [InlineData("2theta", 2, "write 2*x, not 2x")]
    [InlineData("mu -", 5, "ends too early")]
    [InlineData("mu - sin theta", 10, "expected '(' after the function name 'sin'")]
    [InlineData("mu # 3", 4, "found '#'")]
    [InlineData("", 1, "empty")]
    [InlineData("1e+", 4, "exponent")]
    [InlineData("(mu))", 5, "expected an operator")]
    [InlineData("cos()", 5, "expected an argument")]
    public void SyntaxErrors_NameTheOffendingColumn_AndWhatWasExpected(string text, int column, string fragment)
    {
        var parsed = ModelExpression.Parse(text);
        Assert.False(parsed.Succeeded);
        var d = Assert.Single(parsed.Diagnostics);
        Assert.Equal(Severity.Error, d.Severity);
        Assert.Equal(column, d.Column);
        Assert.Contains(fragment, d.Message, StringComparison.Ordinal);
        Assert.Contains($"column {column}", d.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Program_IsPostfix_OfTheParsedTree()
    {
        Assert.Equal("mu a theta sin * - 2 neg ^", ParseThenPostfix("(mu - a*sin(theta))^-2"));
        static string ParseThenPostfix(string text) => Parse(text).ToPostfix();
    }
}
