using System.Globalization;
using NormalFormFit.Simulation;

namespace NormalFormFit.Compare;

/// <summary>A model expression with every parameter given a value, as an <see cref="IPhaseModel"/> to simulate.</summary>
public static class ExpressionPhaseModel
{
    /// <summary>
    /// Binds <paramref name="values"/> to the parameters of <paramref name="expression"/>. Returns the problems
    /// (parameters without a value, values for names the expression does not have) as error diagnostics instead.
    /// </summary>
    /// <param name="expression">The parsed expression.</param>
    /// <param name="values">A value for each parameter.</param>
    /// <param name="name">Name of the model in manifests and labels.</param>
    public static Ingest.Loaded<IPhaseModel> Bind(ModelExpression expression, IReadOnlyDictionary<string, double> values, string name = "expression")
    {
        ArgumentNullException.ThrowIfNull(expression);
        ArgumentNullException.ThrowIfNull(values);
        var errors = new List<Diagnostic>();
        var missing = expression.Parameters.Where(p => !values.ContainsKey(p)).ToList();
        if (missing.Count > 0)
        {
            errors.Add(new Diagnostic(Severity.Error, "missing-value",
                $"give a value to every parameter of the expression with --set; missing: {string.Join(", ", missing)}"));
        }

        foreach (var extra in values.Keys.Where(k => !expression.Parameters.Contains(k)))
        {
            errors.Add(new Diagnostic(Severity.Error, "unknown-parameter",
                $"'{extra}' is not a parameter of the expression{(expression.Parameters.Count > 0 ? "; its parameters are " + string.Join(", ", expression.Parameters) : string.Empty)}"));
        }

        foreach (var (key, value) in values)
        {
            if (!double.IsFinite(value))
            {
                errors.Add(new Diagnostic(Severity.Error, "bad-value", string.Create(CultureInfo.InvariantCulture, $"the value of '{key}' must be finite (got {value})")));
            }
        }

        if (errors.Count > 0)
        {
            return new Ingest.Loaded<IPhaseModel>(null, errors);
        }

        var bound = expression.Parameters.Select(p => values[p]).ToArray();
        var formula = "dθ/dt = " + expression.Text + (bound.Length == 0 ? string.Empty
            : " with " + string.Join(", ", expression.Parameters.Select((p, i) => string.Create(CultureInfo.InvariantCulture, $"{p} = {bound[i]:G6}"))));
        return new Ingest.Loaded<IPhaseModel>(new BoundModel(name, formula, expression, bound), []);
    }

    private sealed class BoundModel(string name, string formula, ModelExpression expression, double[] values) : IPhaseModel
    {
        // One evaluator per thread, reused while the thread works on the same expression.
        [ThreadStatic]
        private static ModelExpression.Evaluator? cached;
        [ThreadStatic]
        private static ModelExpression? cachedOwner;

        public string Name => name;

        public string Formula => formula;

        public double? KnownOnset => null;

        public double Velocity(double theta, double mu)
        {
            if (cached is null || !ReferenceEquals(cachedOwner, expression))
            {
                cached = expression.CreateEvaluator();
                cachedOwner = expression;
            }

            return cached.Evaluate(theta, mu, values, []);
        }

        public double? ExactPeriod(double mu) => null;

        public override string ToString() => formula;
    }
}
