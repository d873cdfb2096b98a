using System.CommandLine;
using System.Globalization;
using NormalFormFit.Simulation;

namespace NormalFormFit.Cli;

internal static class SimulateCommand
{
    /// <summary>Marks a folder as simulate's output, listing its files with their SHA-256 (docs/data-safety.md, clause 3).</summary>
    public const string Marker = ".nffit-simulation";

    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        var model = new Option<string>("--model") { Description = "built-in model: rotor (θ̇ = μ − sin θ) or theta-neuron (θ̇ = 1 − cos θ + (1 + cos θ)μ), or an expression in theta and mu such as 'mu - a*sin(theta)' (docs/model-expressions.md)", DefaultValueFactory = _ => "rotor" };
        var set = new Option<string?>("--set") { Description = "values of the expression's parameters, e.g. a=0.8,k=0.1" };
        var pars = new Option<string>("--params") { Description = "control-parameter values, comma separated (e.g. 1.01,1.02,1.05)", Required = true };
        var outDir = new Option<string>("--out") { Description = "folder to write manifest.csv and the run files into (created if missing)", Required = true };
        var revs = new Option<int>("--revolutions") { Description = $"revolutions per run, {SimulateLimits.MinRevolutions} to {SimulateLimits.MaxRevolutions}", DefaultValueFactory = _ => 10 };
        var dt = new Option<double>("--dt") { Description = FormattableString.Invariant($"sampling interval, {SimulateLimits.MinDt:G} to {SimulateLimits.MaxDt:G} time units"), DefaultValueFactory = _ => 0.01 };
        var noise = new Option<double>("--noise") { Description = FormattableString.Invariant($"measurement noise σ added to the recorded phase (radians), 0 to {SimulateLimits.MaxNoise:G}"), DefaultValueFactory = _ => 0.0 };
        var diffusion = new Option<double>("--diffusion") { Description = FormattableString.Invariant($"dynamic noise D of dθ = f dt + √(2D) dW (radians² per time unit), 0 to {SimulateLimits.MaxDiffusion:G}"), DefaultValueFactory = _ => 0.0 };
        var replace = new Option<bool>("--replace") { Description = "replace the folder's earlier simulated runs (only a folder whose every file simulate wrote, unchanged)" };
        var seed = new Option<int>("--seed") { Description = "seed of the random draws (run k uses seed + k)", DefaultValueFactory = _ => 1 };
        var quiet = new Option<bool>("--quiet") { Description = "print nothing but errors" };
        var cmd = new Command("simulate", "Write synthetic runs and a manifest for a built-in model")
        {
            model, pars, outDir, revs, dt, noise, diffusion, seed, quiet, set, replace,
        };
        cmd.SetAction(pr =>
        {
            var dir = pr.GetValue(outDir)!;
            if (CommandGuard.EmptyOutput([new PlannedOutput("--out", dir, Folder: true)], stderr) is { } usage)
            {
                return usage;
            }

            if (SimulateLimits.Check(pr.GetValue(revs), pr.GetValue(dt), pr.GetValue(noise), pr.GetValue(diffusion)) is { } range)
            {
                stderr.WriteLine($"nffit: usage: {range}");
                return ExitCodes.BadInput;
            }

            if (OwnedFolder.Check(dir, Marker, "simulation", "--out", pr.GetValue(replace), "add --replace to replace it, or give another folder") is { } refused)
            {
                return CommandGuard.Stop(stderr, refused);
            }

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

            if (SimulateLimits.NotFinite(m, mus) is { } where)
            {
                stderr.WriteLine($"nffit: usage: --model: θ̇ is not a finite number at {where}; the model must be finite for every θ at every μ of --params (e.g. no sqrt of a negative number)");
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

            SimulationSetResult? result = null;
            try
            {
                OwnedFolder.Write(dir, Marker, "simulation", tmp => result = SimulationSet.Write(tmp, m, mus, template));
            }
            catch (Exception e) when (e is ArgumentException or OverflowException)
            {
                stderr.WriteLine($"nffit: usage: the runs cannot be simulated with these options ({SimulateLimits.Why(e)}); raise --dt or lower --revolutions, or move --params away from onset; nothing was written");
                return ExitCodes.BadInput;
            }
            catch (FolderNotWrittenException e)
            {
                stderr.WriteLine($"nffit: {dir}: error: {e.Message}; choose a writable folder");
                return ExitCodes.BadInput;
            }

            if (!pr.GetValue(quiet))
            {
                stdout.WriteLine($"wrote {result!.Runs.Count} runs of {m.Formula} and {Path.Combine(Path.GetFullPath(dir), SimulationSet.ManifestFileName)}");
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
