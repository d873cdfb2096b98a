using System.CommandLine;
using System.Globalization;
using NormalFormFit.Simulation;

namespace NormalFormFit.Cli;

internal static class SimulateCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        var model = new Option<string>("--model") { Description = "built-in model: rotor (θ̇ = μ − sin θ) or theta-neuron (θ̇ = 1 − cos θ + (1 + cos θ)μ), or an expression in theta and mu such as 'mu - a*sin(theta)' (docs/model-expressions.md)", DefaultValueFactory = _ => "rotor" };
        var set = new Option<string?>("--set") { Description = "values of the expression's parameters, e.g. a=0.8,k=0.1" };
        var pars = new Option<string>("--params") { Description = "control-parameter values, comma separated (e.g. 1.01,1.02,1.05)", Required = true };
        var outDir = new Option<string>("--out") { Description = "folder to write manifest.csv and the run files into (created if missing)", Required = true };
        var revs = new Option<int>("--revolutions") { Description = "revolutions per run", DefaultValueFactory = _ => 10 };
        var dt = new Option<double>("--dt") { Description = "sampling interval", DefaultValueFactory = _ => 0.01 };
        var noise = new Option<double>("--noise") { Description = "measurement noise σ added to the recorded phase (radians)", DefaultValueFactory = _ => 0.0 };
        var diffusion = new Option<double>("--diffusion") { Description = "dynamic noise D of dθ = f dt + √(2D) dW (radians² per time unit)", DefaultValueFactory = _ => 0.0 };
        var seed = new Option<int>("--seed") { Description = "seed of the random draws (run k uses seed + k)", DefaultValueFactory = _ => 1 };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var cmd = new Command("simulate", "Write synthetic runs and a manifest for a built-in model")
        {
            model, pars, outDir, revs, dt, noise, diffusion, seed, quiet, set,
        };
        cmd.SetAction(pr =>
        {
            var name = pr.GetValue(model)!;
            if (!BuiltInModels.TryGet(name, out var m))
            {
                // Not a built-in name: an expression of our model language.
                var parsed = NormalFormFit.Compare.ModelExpression.Parse(name);
                if (parsed.Value is null)
                {
                    stderr.WriteLine($"nffit: usage: --model is neither a built-in model ({string.Join(", ", BuiltInModels.All.Select(x => x.Name))}) nor a valid expression:");
                    CompareCommand.Report(stderr, parsed.Diagnostics, name);
                    return ExitCodes.BadInput;
                }

                if (!CompareCommand.TryAssignments(pr.GetValue(set), "--set", stderr, out var values))
                {
                    return ExitCodes.BadInput;
                }

                var bound = NormalFormFit.Compare.ExpressionPhaseModel.Bind(parsed.Value, values);
                if (bound.Value is null)
                {
                    CompareCommand.Report(stderr, bound.Diagnostics, null);
                    return ExitCodes.BadInput;
                }

                m = bound.Value;
            }

            var mus = new List<double>();
            foreach (var part in pr.GetValue(pars)!.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries))
            {
                if (!double.TryParse(part, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v))
                {
                    stderr.WriteLine($"nffit: usage: --params: '{part}' is not a number; give values like 1.01,1.02,1.05 (decimal point)");
                    return ExitCodes.BadInput;
                }

                mus.Add(v);
            }

            if (mus.Count == 0 || mus.Distinct().Count() != mus.Count)
            {
                stderr.WriteLine("nffit: usage: --params needs at least one value and no value twice");
                return ExitCodes.BadInput;
            }

            var template = new SimulationOptions
            {
                Revolutions = pr.GetValue(revs),
                SamplingInterval = pr.GetValue(dt),
                MeasurementNoise = pr.GetValue(noise),
                DynamicNoise = pr.GetValue(diffusion),
                Seed = pr.GetValue(seed),
            };
            var problems = template.Validate();
            if (problems.Count > 0)
            {
                stderr.WriteLine($"nffit: usage: {string.Join(" ", problems)}");
                return ExitCodes.BadInput;
            }

            SimulationSetResult result;
            try
            {
                result = SimulationSet.Write(pr.GetValue(outDir)!, m, mus, template);
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                stderr.WriteLine($"nffit: {pr.GetValue(outDir)}: error: cannot write ({e.Message}); choose a writable folder");
                return ExitCodes.BadInput;
            }

            if (!pr.GetValue(quiet))
            {
                stdout.WriteLine($"wrote {result.Runs.Count} runs of {m.Formula} and {result.ManifestPath}");
                foreach (var r in result.Runs)
                {
                    stdout.WriteLine(string.Create(CultureInfo.InvariantCulture,
                        $"  {r.File}  μ = {r.Mu:G6}  {r.Samples} samples  {r.Revolutions} revolutions{(r.ReachedRevolutions ? string.Empty : "  (stopped at the duration limit: not turning?)")}"));
                }
            }

            return ExitCodes.Ok;
        });
        return cmd;
    }
}
