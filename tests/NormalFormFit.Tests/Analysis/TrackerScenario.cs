using System.Globalization;
using System.Text;
using NormalFormFit.Simulation;

namespace NormalFormFit.Tests.Analysis;

/// <summary>
/// Invented demo scenario: a marker on a small motor's rotor filmed at 240 frames per second and tracked by a marker
/// tracker, one file per motor voltage, written as such trackers write them: <c>frame,time_s,x_px,y_px,confidence</c>,
/// image y pointing down. The rotor follows θ̇ = μ − sin θ in model time (0.02 s per unit) with μ = V / 6 V, so the true
/// onset is at 6 V; 5.7 V stalls. The export has what real ones have: single dropped frames (rows absent), bursts of
/// lost frames, rows with blank x/y where the marker was lost, wrong positions (another blob) mostly at low
/// confidence and a few above the threshold. <see cref="Write"/> can also write the same rows with every bad one
/// removed by hand. Deterministic: fixed seeds.
/// </summary>
internal static class TrackerScenario
{
    /// <summary>Volts of onset: μ = V / <see cref="OnsetVolts"/>.</summary>
    public const double OnsetVolts = 6.0;

    /// <summary>Seconds per unit of model time.</summary>
    public const double SecondsPerUnit = 0.02;

    /// <summary>Frames per second.</summary>
    public const double FramesPerSecond = 240;

    /// <summary>The motor voltages: one stalls (below 6 V), the others turn.</summary>
    public static IReadOnlyList<double> Volts { get; } = [5.7, 6.12, 6.24, 6.42, 6.6, 6.9, 7.2];

    /// <summary>How much of each kind of trouble the export has.</summary>
    public sealed record Trouble
    {
        /// <summary>Single frames absent from the file.</summary>
        public double Dropped { get; init; } = 0.03;

        /// <summary>Bursts of lost frames per run (6 to 15 frames each).</summary>
        public int Bursts { get; init; } = 3;

        /// <summary>Rows with blank x and y (marker lost).</summary>
        public double Blank { get; init; } = 0.03;

        /// <summary>Wrong positions at low confidence (0.05 to 0.45).</summary>
        public double LowGlitch { get; init; } = 0.02;

        /// <summary>Wrong positions at a confidence above the default threshold (0.55 to 0.8).</summary>
        public double HighGlitch { get; init; } = 0.003;

        /// <summary>Seed of the trouble (the motion itself does not depend on it).</summary>
        public int Seed { get; init; } = 12;

        /// <summary>The default export.</summary>
        public static Trouble Default { get; } = new();
    }

    /// <summary>One run as simulated: what was exported, and the truth.</summary>
    /// <param name="File">File name in the manifest.</param>
    /// <param name="Volts">Motor voltage.</param>
    /// <param name="Rows">Lines of the export (without the header).</param>
    /// <param name="CleanRows">The same rows with every bad one removed.</param>
    /// <param name="WholeTurns">Whole turns the rotor made during the record.</param>
    /// <param name="BlankRows">Rows written with blank x and y.</param>
    /// <param name="LowGlitches">Wrong positions at low confidence.</param>
    /// <param name="HighGlitches">Wrong positions at a confidence above the threshold.</param>
    public sealed record Run(string File, double Volts, IReadOnlyList<string> Rows, IReadOnlyList<string> CleanRows, int WholeTurns, int BlankRows, int LowGlitches, int HighGlitches);

    /// <summary>The header every file has.</summary>
    public const string Header = "frame,time_s,x_px,y_px,confidence";

    /// <summary>Simulates every run.</summary>
    public static IReadOnlyList<Run> Simulate(Trouble? trouble = null, int revolutions = 10)
    {
        trouble ??= Trouble.Default;
        var runs = new List<Run>();
        for (var k = 0; k < Volts.Count; k++)
        {
            runs.Add(SimulateOne(Volts[k], k, trouble, revolutions));
        }

        return runs;
    }

    /// <summary>Writes the runs and a manifest <c>file,voltage_V</c> into <paramref name="folder"/>; returns the manifest's path.</summary>
    public static string Write(string folder, IReadOnlyList<Run> runs, bool clean = false)
    {
        Directory.CreateDirectory(folder);
        var manifest = new StringBuilder("file,voltage_V\n");
        foreach (var run in runs)
        {
            var sb = new StringBuilder(Header).Append('\n');
            foreach (var row in clean ? run.CleanRows : run.Rows)
            {
                sb.Append(row).Append('\n');
            }

            File.WriteAllText(Path.Combine(folder, run.File), sb.ToString());
            manifest.Append(CultureInfo.InvariantCulture, $"{run.File},{run.Volts:R}\n");
        }

        var path = Path.Combine(folder, "manifest.csv");
        File.WriteAllText(path, manifest.ToString());
        return path;
    }

    private static Run SimulateOne(double volts, int index, Trouble trouble, int revolutions)
    {
        var mu = volts / OnsetVolts;
        var frame = 1.0 / FramesPerSecond / SecondsPerUnit;
        var stalls = mu < 1;
        var sim = Simulator.Run(BuiltInModels.Rotor, new SimulationOptions
        {
            Mu = mu,
            Revolutions = revolutions,
            SamplingInterval = frame,
            InitialPhase = stalls ? 0.0 : null,
            MaxDuration = stalls ? 150 : null,
            Seed = 70 + index,
        });

        // Camera: a circle of 150 px seen at a tilt of 40°, rotated 25° in the image, centre (400, 300), y down.
        var rng = new Random(trouble.Seed * 1000 + index);
        var pixel = GaussianSource.Create(90 + index, stream: 3);
        var (sr, cr) = Math.SinCos(25 * Math.PI / 180);
        var squash = Math.Cos(40 * Math.PI / 180);
        var n = sim.Time.Length;
        var lost = new bool[n];
        for (var b = 0; b < trouble.Bursts; b++)
        {
            var start = rng.Next(n);
            var length = 6 + rng.Next(10);
            for (var i = start; i < Math.Min(n, start + length); i++)
            {
                lost[i] = true;
            }
        }

        var rows = new List<string>(n);
        var clean = new List<string>(n);
        int blank = 0, low = 0, highs = 0;
        var ic = CultureInfo.InvariantCulture;
        for (var i = 0; i < n; i++)
        {
            var nx = 0.7 * pixel.Next();
            var ny = 0.7 * pixel.Next();
            var u = rng.NextDouble();
            var (s, c) = Math.SinCos(sim.TruePhase[i]);
            var px = 150 * c;
            var py = 150 * squash * s;
            var x = 400 + (cr * px) - (sr * py) + nx;
            var y = 300 - ((sr * px) + (cr * py)) + ny;
            var t = i / FramesPerSecond;
            if (lost[i] || u < trouble.Dropped)
            {
                continue;
            }

            string row;
            if (u < trouble.Dropped + trouble.Blank)
            {
                row = string.Create(ic, $"{i},{t:F6},,,{0.01 * rng.NextDouble():F3}");
                blank++;
            }
            else if (u < trouble.Dropped + trouble.Blank + trouble.LowGlitch + trouble.HighGlitch)
            {
                // Another blob: somewhere 60 to 300 px from the rotor's centre, in any direction.
                var high = u >= trouble.Dropped + trouble.Blank + trouble.LowGlitch;
                var angle = 2 * Math.PI * rng.NextDouble();
                var distance = 60 + (240 * rng.NextDouble());
                var conf = high ? 0.55 + (0.25 * rng.NextDouble()) : 0.05 + (0.4 * rng.NextDouble());
                row = string.Create(ic, $"{i},{t:F6},{400 + (distance * Math.Cos(angle)):F2},{300 + (distance * Math.Sin(angle)):F2},{conf:F3}");
                if (high)
                {
                    highs++;
                }
                else
                {
                    low++;
                }
            }
            else
            {
                row = string.Create(ic, $"{i},{t:F6},{x:F2},{y:F2},{0.85 + (0.15 * rng.NextDouble()):F3}");
                clean.Add(row);
            }

            rows.Add(row);
        }

        var turns = (int)Math.Floor(Math.Abs(sim.TruePhase[^1] - sim.TruePhase[0]) / (2 * Math.PI));
        return new Run(string.Create(ic, $"motor_{volts:F2}V.csv"), volts, rows, clean, turns, blank, low, highs);
    }
}
