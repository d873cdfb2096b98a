using System.Globalization;
using NormalFormFit.Ingest;

namespace NormalFormFit.Simulation;

/// <summary>What <see cref="SimulationSet.Write"/> wrote for one run.</summary>
/// <param name="File">File name relative to the manifest.</param>
/// <param name="Mu">Control parameter.</param>
/// <param name="Seed">Seed used for the run.</param>
/// <param name="Samples">Number of samples written.</param>
/// <param name="Revolutions">Whole turns completed.</param>
/// <param name="ReachedRevolutions">False when the run stopped at its duration guard (below or very near onset).</param>
public sealed record WrittenRun(string File, double Mu, int Seed, int Samples, int Revolutions, bool ReachedRevolutions);

/// <summary>What <see cref="SimulationSet.Write"/> wrote.</summary>
/// <param name="ManifestPath">Full path of <c>manifest.csv</c>.</param>
/// <param name="Runs">One entry per run, in the order of the μ values.</param>
public sealed record SimulationSetResult(string ManifestPath, IReadOnlyList<WrittenRun> Runs);

/// <summary>Writes a set of runs at several μ, with a manifest, ready for analysis.</summary>
public static class SimulationSet
{
    /// <summary>The manifest's file name.</summary>
    public const string ManifestFileName = "manifest.csv";

    /// <summary>
    /// Simulates <paramref name="model"/> at each μ and writes <c>run-00.csv</c>, <c>run-01.csv</c>, … and
    /// <c>manifest.csv</c> (columns file, param, label) into <paramref name="directory"/>, which is created if
    /// missing. Run k uses the template's options with Mu = mus[k] and Seed = template.Seed + k, so the set is
    /// reproducible and each run has its own noise. The manifest is written last: it exists only when every run
    /// file was written.
    /// </summary>
    /// <param name="directory">Output folder.</param>
    /// <param name="model">The phase model.</param>
    /// <param name="mus">Control parameters, one run each; at least one.</param>
    /// <param name="template">Options shared by all runs (its Mu and Seed are replaced as above).</param>
    /// <returns>The manifest path and a summary of each run.</returns>
    /// <exception cref="ArgumentException">No μ values, or invalid options.</exception>
    public static SimulationSetResult Write(
        string directory,
        IPhaseModel model,
        IReadOnlyList<double> mus,
        SimulationOptions template)
    {
        ArgumentException.ThrowIfNullOrWhiteSpace(directory);
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(mus);
        ArgumentNullException.ThrowIfNull(template);
        if (mus.Count == 0)
        {
            throw new ArgumentException("At least one μ value is needed.", nameof(mus));
        }

        var all = Enumerable.Range(0, mus.Count).Select(k => OptionsFor(template, mus[k], k)).ToList();
        var problems = all.SelectMany(o => o.Validate()).Distinct(StringComparer.Ordinal).ToList();
        if (problems.Count > 0)
        {
            throw new ArgumentException("Invalid simulation options: " + string.Join(" ", problems), nameof(template));
        }

        Directory.CreateDirectory(directory);
        var width = Math.Max(2, (mus.Count - 1).ToString(CultureInfo.InvariantCulture).Length);
        var entries = new List<ManifestEntry>(mus.Count);
        var written = new List<WrittenRun>(mus.Count);
        for (var k = 0; k < mus.Count; k++)
        {
            var options = all[k];
            var run = Simulator.Run(model, options);
            var file = "run-" + k.ToString("D" + width.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture) + ".csv";
            RunWriter.WriteRun(Path.Combine(directory, file), run);
            var label = string.Create(CultureInfo.InvariantCulture, $"{model.Name} seed={options.Seed}");
            entries.Add(new ManifestEntry(file, options.Mu, label));
            written.Add(new WrittenRun(file, options.Mu, options.Seed, run.Time.Length, run.Revolutions, run.ReachedRevolutions));
        }

        var manifest = Path.GetFullPath(Path.Combine(directory, ManifestFileName));
        RunWriter.WriteManifest(manifest, entries);
        return new SimulationSetResult(manifest, written);
    }

    private static SimulationOptions OptionsFor(SimulationOptions template, double mu, int index) =>
        template with { Mu = mu, Seed = unchecked(template.Seed + index) };
}
