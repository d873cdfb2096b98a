using System.Diagnostics;
using System.Globalization;
using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Running;
using NormalFormFit.Ingest;
using NormalFormFit.Smoothing;

namespace NormalFormFit.Bench;

/// <summary>
/// Benchmarks of the scale work (docs/scale.md). Not part of <c>dotnet test</c>.
/// <c>read FILE...</c> times the CSV reader alone (best of 3, MB/s per core); <c>smooth N...</c> times the two
/// smoothers on synthetic records; anything else goes to BenchmarkDotNet (e.g. <c>--filter * --job short</c>).
/// </summary>
public static class Program
{
    public static int Main(string[] args)
    {
        if (args.Length > 0 && args[0] == "read")
        {
            return Read(args[1..]);
        }

        if (args.Length > 0 && args[0] == "smooth")
        {
            return Smooth(args[1..]);
        }

        if (args.Length > 0 && args[0] == "sweeps")
        {
            return Sweeps(args[1..]);
        }

        if (args.Length > 0 && args[0] == "hh-steps")
        {
            return HodgkinHuxleySteps(args[1..]);
        }

        if (args.Length > 0 && args[0] == "current-steps")
        {
            return CurrentSteps(args[1..]);
        }

        if (args.Length > 0 && args[0] == "signal-coverage")
        {
            return SignalCoverage(args[1..]);
        }

        if (args.Length > 0 && args[0] == "memory")
        {
            return Memory(args[1..]);
        }

        BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
        return 0;
    }

    private static int Read(string[] files)
    {
        long bytes = 0, samples = 0;
        var best = double.MaxValue;
        var bestCpu = double.MaxValue;
        for (var k = 0; k < 3; k++)
        {
            bytes = 0;
            samples = 0;
            var cpu = Process.GetCurrentProcess().TotalProcessorTime;
            var clock = Stopwatch.StartNew();
            foreach (var f in files)
            {
                var r = RunReader.Read(f);
                if (r.Value is null)
                {
                    Console.Error.WriteLine(string.Join("; ", r.Diagnostics));
                    return 2;
                }

                bytes += new FileInfo(f).Length;
                samples += r.Value.Time.Length;
            }

            best = Math.Min(best, clock.Elapsed.TotalSeconds);
            bestCpu = Math.Min(bestCpu, (Process.GetCurrentProcess().TotalProcessorTime - cpu).TotalSeconds);
        }

        // CPU time is the fair figure on a shared machine: wall time includes waiting for a core.
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"read {files.Length} file(s): {samples} samples, {bytes / 1e6:F1} MB; best of 3: {best:F2} s wall ({bytes / 1e6 / best:F0} MB/s), {bestCpu:F2} s CPU ({bytes / 1e6 / bestCpu:F0} MB/s per core)"));
        return 0;
    }

    // `sweeps FOLDER SECONDS`: current-clamp sweeps of the class-I Morris–Lecar model (parameters of
    // NormalFormFit.Simulation.MorrisLecar) at 20 kHz, `time_ms,Vm_mV`, one file per injected current (the knee of the
    // steady-state I–V curve + 0.5, 1.5, 3 μA/cm²), a noise current of 1 μA/cm²·√ms and 0.3 mV of measurement noise
    // (invented demo levels), and a manifest `file,I_app [uA/cm2]`.
    private static int Sweeps(string[] args)
    {
        var folder = args[0];
        var seconds = double.Parse(args[1], CultureInfo.InvariantCulture);
        Directory.CreateDirectory(folder);
        var model = NormalFormFit.Simulation.MorrisLecar.ClassOne;
        var onset = model.RestSaddleNode().Current;
        double[] offsets = [0.5, 1.5, 3];
        var manifest = new System.Text.StringBuilder("file,I_app [uA/cm2]\n");
        for (var i = 0; i < offsets.Length; i++)
        {
            var track = model.Sweep(onset + offsets[i], seconds * 1000, 0.05, 0, 1.0, 900 + i);
            var noise = new Random(900 + i);
            var name = string.Create(CultureInfo.InvariantCulture, $"sweep_{i}.csv");
            using (var w = new StreamWriter(Path.Combine(folder, name)))
            {
                w.Write("time_ms,Vm_mV\n");
                for (var k = 0; k < track.V.Length; k++)
                {
                    w.Write(string.Create(CultureInfo.InvariantCulture, $"{k * 0.05:F2},{track.V[k] + (0.3 * Math.Sqrt(-2 * Math.Log(1 - noise.NextDouble())) * Math.Cos(2 * Math.PI * noise.NextDouble())):F3}\n"));
                }
            }

            manifest.Append(CultureInfo.InvariantCulture, $"{name},{onset + offsets[i]:R}\n");
        }

        File.WriteAllText(Path.Combine(folder, "manifest.csv"), manifest.ToString());
        File.WriteAllText(Path.Combine(folder, "one.csv"), "file,I_app [uA/cm2]\nsweep_0.csv," + (onset + offsets[0]).ToString("R", CultureInfo.InvariantCulture) + "\n");
        return 0;
    }

    // `current-steps FOLDER SECONDS SEED`: current-clamp sweeps of the class-I Morris–Lecar model as in the signal
    // acceptance test (sweeps at the knee of I∞(V) −2, −1, −0.4 (silent), +0.25 … +7 μA/cm²), a noise current of
    // 1 μA/cm²·√ms and 0.3 mV of measurement noise (invented demo levels), `time_ms,Vm_mV` at 20 kHz, manifest
    // `file,I_app [uA/cm2]`. Prints the onset (knee) so that a run of `nffit analyze` on the folder can be judged.
    private static int CurrentSteps(string[] args)
    {
        var folder = args[0];
        var seconds = double.Parse(args[1], CultureInfo.InvariantCulture);
        var seed = int.Parse(args[2], CultureInfo.InvariantCulture);
        Directory.CreateDirectory(folder);
        var model = NormalFormFit.Simulation.MorrisLecar.ClassOne;
        var onset = model.RestSaddleNode().Current;
        double[] offsets = [-2, -1, -0.4, 0.25, 0.5, 1, 1.75, 2.5, 3.5, 5, 7];
        var manifest = new System.Text.StringBuilder("file,I_app [uA/cm2]\n");
        Parallel.For(0, offsets.Length, i =>
        {
            var track = model.Sweep(onset + offsets[i], seconds * 1000, 0.05, 0, 1.0, seed + i);
            var noise = new Random(seed + 7919 + i);
            var text = new System.Text.StringBuilder("time_ms,Vm_mV\n");
            for (var k = 0; k < track.V.Length; k++)
            {
                text.Append(CultureInfo.InvariantCulture, $"{k * 0.05:F2},{track.V[k] + (0.3 * Math.Sqrt(-2 * Math.Log(1 - noise.NextDouble())) * Math.Cos(2 * Math.PI * noise.NextDouble())):F3}\n");
            }

            File.WriteAllText(Path.Combine(folder, string.Create(CultureInfo.InvariantCulture, $"sweep_{i:00}.csv")), text.ToString());
        });
        for (var i = 0; i < offsets.Length; i++)
        {
            manifest.Append(CultureInfo.InvariantCulture, $"sweep_{i:00}.csv,{onset + offsets[i]:R}\n");
        }

        File.WriteAllText(Path.Combine(folder, "manifest.csv"), manifest.ToString());
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"onset (knee of I∞(V)) {onset:R}"));
        return 0;
    }

    // `hh-steps FOLDER SECONDS SEED I1 I2 …`: current-clamp sweeps of the Hodgkin–Huxley model (class II) from rest at
    // the given currents (μA/cm²), a noise current of 0.5 μA/cm²·√ms and 0.3 mV of measurement noise (invented demo
    // levels), `time_ms,Vm_mV` at 20 kHz, manifest `file,I_app [uA/cm2]`.
    private static int HodgkinHuxleySteps(string[] args)
    {
        var folder = args[0];
        var seconds = double.Parse(args[1], CultureInfo.InvariantCulture);
        var seed = int.Parse(args[2], CultureInfo.InvariantCulture);
        var currents = args[3..].Select(a => double.Parse(a, CultureInfo.InvariantCulture)).ToArray();
        Directory.CreateDirectory(folder);
        Parallel.For(0, currents.Length, i =>
        {
            var v = NormalFormFit.Simulation.HodgkinHuxley.Standard.Sweep(currents[i], seconds * 1000, 0.05, 0.5, seed + i);
            var noise = new Random(seed + 7919 + i);
            var text = new System.Text.StringBuilder("time_ms,Vm_mV\n");
            for (var k = 0; k < v.Length; k++)
            {
                text.Append(CultureInfo.InvariantCulture, $"{k * 0.05:F2},{v[k] + (0.3 * Math.Sqrt(-2 * Math.Log(1 - noise.NextDouble())) * Math.Cos(2 * Math.PI * noise.NextDouble())):F3}\n");
            }

            File.WriteAllText(Path.Combine(folder, string.Create(CultureInfo.InvariantCulture, $"hh_{i:00}.csv")), text.ToString());
        });
        var manifest = new System.Text.StringBuilder("file,I_app [uA/cm2]\n");
        for (var i = 0; i < currents.Length; i++)
        {
            manifest.Append(CultureInfo.InvariantCulture, $"hh_{i:00}.csv,{currents[i]:R}\n");
        }

        File.WriteAllText(Path.Combine(folder, "manifest.csv"), manifest.ToString());
        return 0;
    }

    // `signal-coverage SIGMA DURATION_MS SPACING SEEDS`: how often the period route's 95 % interval covers the fold of
    // the class-I Morris–Lecar model (knee of I∞(V)) on seeded sweeps with a noise current SIGMA (μA/cm²·√ms): spike
    // times by upward crossings of 0 mV after V fell below −40 mV (linear interpolation), one run per current, sweeps
    // at offsets 0.25 … 7 (SPACING 0) or 0.15 … 2.4 (SPACING 1) μA/cm² above the fold. Prints coverage, mean bias,
    // mean standard error and the spread of the estimates (a measurement, not a test).
    private static int SignalCoverage(string[] args)
    {
        var sigma = double.Parse(args[0], CultureInfo.InvariantCulture);
        var duration = double.Parse(args[1], CultureInfo.InvariantCulture);
        var spacing = int.Parse(args[2], CultureInfo.InvariantCulture);
        var seeds = int.Parse(args[3], CultureInfo.InvariantCulture);
        double[] offsets = spacing == 0 ? [0.25, 0.5, 1, 1.75, 2.5, 3.5, 5, 7] : [0.15, 0.3, 0.6, 1.2, 2.4];
        var model = NormalFormFit.Simulation.MorrisLecar.ClassOne;
        var onset = model.RestSaddleNode().Current;
        var results = new (double Value, double Low, double High, double Se)[seeds];
        Parallel.For(0, seeds, s =>
        {
            var runs = new List<NormalFormFit.Analysis.RunResult>();
            for (var i = 0; i < offsets.Length; i++)
            {
                var track = model.Sweep(onset + offsets[i], duration, 0.05, 0, sigma, 10000 + (100 * s) + i);
                var spikes = new List<double>();
                var armed = false;
                for (var k = 1; k < track.V.Length; k++)
                {
                    armed |= track.V[k] < -40;
                    if (armed && track.V[k - 1] < 0 && track.V[k] >= 0)
                    {
                        spikes.Add(track.Time[k - 1] + (-track.V[k - 1] / (track.V[k] - track.V[k - 1]) * 0.05));
                        armed = false;
                    }
                }

                var name = string.Create(CultureInfo.InvariantCulture, $"s{i}");
                runs.Add(NormalFormFit.Analysis.EventRunAnalyzer.Analyze(new EventRecording(name, [.. spikes], [0]), onset + offsets[i], name));
            }

            var p = NormalFormFit.Analysis.OnsetAnalysis.Combine(runs).FromPeriod;
            results[s] = (p.Value, p.Ci95.Low, p.Ci95.High, p.StandardError);
        });
        var mean = results.Average(r => r.Value);
        var sd = Math.Sqrt(results.Sum(r => (r.Value - mean) * (r.Value - mean)) / (seeds - 1));
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
            $"noise {sigma} uA/cm2*sqrt(ms), {duration} ms sweeps, spacing {spacing}: covers {results.Count(r => r.Low <= onset && onset <= r.High)}/{seeds}; mean bias {mean - onset:F4}; mean se {results.Average(r => r.Se):F4}; sd of estimates {sd:F4}"));
        return 0;
    }

    // Allocation of RunAnalyzer.Analyze on one run, with each smoother: what a run costs in memory besides its
    // trajectory (t, θ). Allocation, not peak: an upper bound on what the run can hold at once.
    private static int Memory(string[] sizes)
    {
        Console.WriteLine("samples  method     allocated MB  bytes/sample");
        foreach (var s in sizes)
        {
            var n = int.Parse(s, CultureInfo.InvariantCulture);
            var (t, y) = Synthetic.Record(n);
            var trajectory = Trajectory.FromRecording(new PhaseRecording("probe", t, y, [0]));
            foreach (var method in new[] { SmoothingMethod.Exact, SmoothingMethod.Penalized })
            {
                var options = new NormalFormFit.Analysis.RunOptions { Smoothing = new SmoothingOptions { Method = method } };
                var before = GC.GetAllocatedBytesForCurrentThread();
                NormalFormFit.Analysis.RunAnalyzer.Analyze(trajectory, 1.05, "probe", null, options);
                var bytes = GC.GetAllocatedBytesForCurrentThread() - before;
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{n,8}  {method,-9}  {bytes / 1e6,12:F1}  {(double)bytes / n,12:F1}"));
                before = GC.GetAllocatedBytesForCurrentThread();
                SegmentSmoother.Smooth(t, trajectory.Phase, options.Smoothing, new double[n], new double[n]);
                bytes = GC.GetAllocatedBytesForCurrentThread() - before;
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{n,8}  {method,-9}  {bytes / 1e6,12:F1}  {(double)bytes / n,12:F1}  (smoothing alone, with its two output arrays)"));
            }
        }

        return 0;
    }

    private static int Smooth(string[] sizes)
    {
        Console.WriteLine("samples  method     seconds(best of 3)  edf");
        foreach (var s in sizes)
        {
            var n = int.Parse(s, CultureInfo.InvariantCulture);
            var (t, y) = Synthetic.Record(n);
            foreach (var method in new[] { SmoothingMethod.Penalized, SmoothingMethod.Exact })
            {
                var options = new SmoothingOptions { Method = method };
                var values = new double[n];
                var slopes = new double[n];
                var best = double.MaxValue;
                SegmentSmoothing? fit = null;
                for (var k = 0; k < 3; k++)
                {
                    var clock = Stopwatch.StartNew();
                    fit = SegmentSmoother.Smooth(t, y, options, values, slopes);
                    best = Math.Min(best, clock.Elapsed.TotalSeconds);
                }

                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{n,8}  {method,-9}  {best,18:F3}  {fit!.EffectiveDegreesOfFreedom:F0}"));
            }
        }

        return 0;
    }
}

/// <summary>A rotor-like phase record: θ̇ = μ − sin θ integrated by RK4 at dt, plus Gaussian noise (invented demo data).</summary>
public static class Synthetic
{
    public static (double[] T, double[] Y) Record(int n, double dt = 0.002, double mu = 1.05, double noise = 0.01, int seed = 5)
    {
        var rng = new Random(seed);
        var t = new double[n];
        var y = new double[n];
        var th = 0.0;
        for (var i = 0; i < n; i++)
        {
            t[i] = i * dt;
            var u1 = 1.0 - rng.NextDouble();
            var u2 = rng.NextDouble();
            y[i] = th + (noise * Math.Sqrt(-2 * Math.Log(u1)) * Math.Cos(2 * Math.PI * u2));
            double F(double x) => mu - Math.Sin(x);
            var k1 = F(th);
            var k2 = F(th + (0.5 * dt * k1));
            var k3 = F(th + (0.5 * dt * k2));
            var k4 = F(th + (dt * k3));
            th += dt * (k1 + (2 * k2) + (2 * k3) + k4) / 6;
        }

        return (t, y);
    }
}

/// <summary>Both smoothers at 10⁵ and 10⁶ samples.</summary>
[MemoryDiagnoser]
public class SmoothingBenchmarks
{
    private double[] t = [];
    private double[] y = [];
    private double[] values = [];
    private double[] slopes = [];

    [Params(100_000, 1_000_000)]
    public int Samples { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        (t, y) = Synthetic.Record(Samples);
        values = new double[Samples];
        slopes = new double[Samples];
    }

    [Benchmark(Baseline = true)]
    public SegmentSmoothing Exact() => SegmentSmoother.Smooth(t, y, new SmoothingOptions { Method = SmoothingMethod.Exact }, values, slopes);

    [Benchmark]
    public SegmentSmoothing Penalized() => SegmentSmoother.Smooth(t, y, new SmoothingOptions { Method = SmoothingMethod.Penalized }, values, slopes);
}
