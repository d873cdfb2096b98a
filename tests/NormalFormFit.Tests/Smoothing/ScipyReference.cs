using System.Globalization;
using System.Text.Json;

namespace NormalFormFit.Tests.Smoothing;

/// <summary>
/// Reads the reference values written by Reference/make_smoothing_reference.py
/// (SciPy 1.10.1, scipy.interpolate.make_smoothing_spline; see the script for the exact calls).
/// </summary>
internal sealed record ScipyCase(
    string Name,
    double[] X,
    double[] Y,
    double[]? W,
    double? LambdaGiven,
    double Lambda,
    double[] Value,
    double[] First,
    double[] Second,
    double[] XEval,
    double[] ValueEval,
    double[] FirstEval,
    double Trace,
    double Gcv)
{
    private static readonly Lazy<IReadOnlyDictionary<string, ScipyCase>> All = new(Load);

    public static string ScipyVersion { get; private set; } = "";

    public static ScipyCase Get(string name) => All.Value[name];

    private static Dictionary<string, ScipyCase> Load()
    {
        string folder = Path.Combine(AppContext.BaseDirectory, "Reference");
        var data = new Dictionary<string, (List<double> X, List<double> Y, List<double> W)>();
        foreach (var line in File.ReadLines(Path.Combine(folder, "smoothing_data.csv")))
        {
            if (line.StartsWith('#') || line.StartsWith("case,", StringComparison.Ordinal) || line.Length == 0)
            {
                continue;
            }

            var f = line.Split(',');
            if (!data.TryGetValue(f[0], out var d))
            {
                d = ([], [], []);
                data[f[0]] = d;
            }

            d.X.Add(double.Parse(f[1], CultureInfo.InvariantCulture));
            d.Y.Add(double.Parse(f[2], CultureInfo.InvariantCulture));
            d.W.Add(double.Parse(f[3], CultureInfo.InvariantCulture));
        }

        using var json = JsonDocument.Parse(File.ReadAllText(Path.Combine(folder, "smoothing_reference.json")));
        ScipyVersion = json.RootElement.GetProperty("scipy").GetString() ?? "";
        var result = new Dictionary<string, ScipyCase>();
        foreach (var c in json.RootElement.GetProperty("cases").EnumerateArray())
        {
            string name = c.GetProperty("name").GetString()!;
            var d = data[name];
            bool weighted = c.GetProperty("weighted").GetBoolean();
            var given = c.GetProperty("lam_given");
            result[name] = new ScipyCase(
                name,
                [.. d.X],
                [.. d.Y],
                weighted ? [.. d.W] : null,
                given.ValueKind == JsonValueKind.Null ? null : given.GetDouble(),
                c.GetProperty("lam").GetDouble(),
                Array(c, "value"),
                Array(c, "first"),
                Array(c, "second"),
                Array(c, "x_eval"),
                Array(c, "value_eval"),
                Array(c, "first_eval"),
                c.GetProperty("trace").GetDouble(),
                c.GetProperty("gcv").GetDouble());
        }

        return result;
    }

    private static double[] Array(JsonElement c, string key) =>
        [.. c.GetProperty(key).EnumerateArray().Select(e => e.GetDouble())];
}
