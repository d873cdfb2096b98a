using System.Globalization;

namespace NormalFormFit.Compare;

/// <summary>
/// What a phase model must contain before it can be compared with runs: the phase <c>theta</c> (else there is no field
/// to compare) and the control parameter <c>mu</c> (else there is no map to the runs' parameter and no onset). When one
/// is missing and a free parameter's name looks like it in another notation (<c>phi</c>, <c>x</c>, <c>I</c>…), the
/// refusal names that parameter: it would otherwise have been fitted as a constant without a word.
/// </summary>
public static class ModelRequirements
{
    /// <summary>Error code: the expression does not contain <c>theta</c>.</summary>
    public const string NoPhase = "model-without-phase";

    /// <summary>Error code: the expression does not contain <c>mu</c>.</summary>
    public const string NoMu = "model-without-mu";

    // Names that users write for a phase or for a control parameter in other notations (common practice, no source).
    private static readonly string[] PhaseLike = ["phi", "psi", "th", "phase", "angle", "x", "ϑ", "φ", "ψ", "alpha", "q"];
    private static readonly string[] MuLike = ["i", "i_app", "iapp", "iext", "i_ext", "v", "u", "p", "param", "lambda", "eps", "epsilon", "r", "omega", "gamma", "nu", "tau", "torque", "k"];

    /// <summary>The errors that refuse <paramref name="model"/> (none when it can be compared).</summary>
    /// <param name="model">The parsed expression.</param>
    /// <param name="source">What to name as the file in diagnostics, e.g. <c>--model</c>.</param>
    public static IReadOnlyList<Diagnostic> Check(ModelExpression model, string source = "--model")
    {
        ArgumentNullException.ThrowIfNull(model);
        var found = new List<Diagnostic>();
        var phaseLike = model.Parameters.FirstOrDefault(p => PhaseLike.Contains(p.ToLowerInvariant()));
        var muLike = model.Parameters.FirstOrDefault(p => MuLike.Contains(p.ToLowerInvariant()));
        if (!model.UsesTheta)
        {
            found.Add(new Diagnostic(Severity.Error, NoPhase,
                "the model does not use the phase 'theta', so it has no field to compare with the runs" +
                (phaseLike is null ? string.Empty : $"; '{phaseLike}' would be fitted as a constant: write theta for the phase") +
                "; write θ̇ as a function of theta, e.g. mu - a*sin(theta)", source, Line(phaseLike is null ? null : Position(model.Text, phaseLike)), phaseLike is null ? null : Position(model.Text, phaseLike)));
        }

        if (!model.UsesMu)
        {
            found.Add(new Diagnostic(Severity.Error, NoMu,
                "the model does not use the control parameter 'mu', so it cannot be mapped to the runs' parameter (μ_model = c0 + c1·μ_lab) and has no onset" +
                (muLike is null ? string.Empty : $"; '{muLike}' would be fitted as a constant: write mu for the control parameter") +
                "; write e.g. mu - a*sin(theta)", source, Line(muLike is null ? null : Position(model.Text, muLike)), muLike is null ? null : Position(model.Text, muLike)));
        }

        return found;
    }

    /// <summary>An expression is one line: line 1 wherever a column is known.</summary>
    private static int? Line(int? column) => column is null ? null : 1;

    /// <summary>1-based column of the first occurrence of <paramref name="name"/> as a whole word, or null.</summary>
    private static int? Position(string text, string name)
    {
        for (var i = text.IndexOf(name, StringComparison.Ordinal); i >= 0; i = text.IndexOf(name, i + 1, StringComparison.Ordinal))
        {
            var before = i == 0 || !(char.IsLetterOrDigit(text[i - 1]) || text[i - 1] == '_');
            var end = i + name.Length;
            var after = end >= text.Length || !(char.IsLetterOrDigit(text[end]) || text[end] == '_');
            if (before && after)
            {
                return i + 1;
            }
        }

        return null;
    }
}
