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

        if (args.Length > 0 && args[0] == "signal-onsets")
        {
            return SignalOnsets(args[1..]);
        }

        if (args.Length > 0 && args[0] == "signal-stages")
        {
            return SignalStages(args[1..]);
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

    // `signal-onsets MODEL FOLDER SEED...`: the signal acceptance sweeps of the class-I models (MODEL `ml`: Morris–Lecar,
    // knee −2, −1, −0.4 (silent), +0.25 … +7 μA/cm², noise current 1 μA/cm²·√ms; `wb`: Wang–Buzsáki, knee −0.06, −0.03,
    // −0.01 (silent), +0.01 … +0.22, noise current 0.02 μA/cm²·√ms; both 4 s at 20 kHz with 0.3 mV of measurement noise,
    // invented demo levels), analysed with the protophase, one line per seed: both routes' onsets, standard errors,
    // 95 % intervals and whether they cover the knee of I∞(V) (a measurement, not a test).
    private static int SignalOnsets(string[] args)
    {
        var model = args[0];
        var folder = args[1];
        var seeds = args[2..].Select(a => int.Parse(a, CultureInfo.InvariantCulture)).ToArray();
        var ml = NormalFormFit.Simulation.MorrisLecar.ClassOne;
        var wb = NormalFormFit.Simulation.WangBuzsaki.Standard;
        var onset = model == "ml" ? ml.RestSaddleNode().Current : wb.RestSaddleNode().Current;
        double[] offsets = model == "ml" ? [-2, -1, -0.4, 0.25, 0.5, 1, 1.75, 2.5, 3.5, 5, 7] : [-0.06, -0.03, -0.01, 0.01, 0.02, 0.04, 0.07, 0.11, 0.16, 0.22];
        var nearest = offsets.Where(o => o > 0).Min();
        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{model}: onset (knee of I∞(V)) {onset:R}; nearest firing sweep +{nearest}"));
        foreach (var seed in seeds)
        {
            var dir = Path.Combine(folder, string.Create(CultureInfo.InvariantCulture, $"{model}_{seed}"));
            Directory.CreateDirectory(dir);
            if (!File.Exists(Path.Combine(dir, "manifest.csv")))
            {
                Parallel.For(0, offsets.Length, i =>
                {
                    var v = model == "ml" ? ml.Sweep(onset + offsets[i], 4000, 0.05, 0, 1.0, seed + i).V : wb.Sweep(onset + offsets[i], 4000, 0.05, 0.02, seed + i);
                    var noise = new Random(seed + 7919 + i);
                    var text = new System.Text.StringBuilder("time_ms,Vm_mV\n");
                    for (var k = 0; k < v.Length; k++)
                    {
                        text.Append(CultureInfo.InvariantCulture, $"{k * 0.05:F2},{v[k] + (0.3 * Math.Sqrt(-2 * Math.Log(1 - noise.NextDouble())) * Math.Cos(2 * Math.PI * noise.NextDouble())):F3}\n");
                    }

                    File.WriteAllText(Path.Combine(dir, string.Create(CultureInfo.InvariantCulture, $"s_{i:00}.csv")), text.ToString());
                });
                var manifest = new System.Text.StringBuilder("file,I_app [uA/cm2]\n");
                for (var i = 0; i < offsets.Length; i++)
                {
                    manifest.Append(CultureInfo.InvariantCulture, $"s_{i:00}.csv,{onset + offsets[i]:R}\n");
                }

                File.WriteAllText(Path.Combine(dir, "manifest.csv"), manifest.ToString());
            }

            var options = new NormalFormFit.Analysis.AnalyzeOptions
            {
                Run = NormalFormFit.Analysis.RunOptions.Default with
                {
                    SignalEvents = NormalFormFit.Ingest.SignalEventOptions.Default with { Protophase = true },
                    Bottleneck = NormalFormFit.Bottleneck.BottleneckOptions.Default with { RemoveTaylorRemainder = Environment.GetEnvironmentVariable("SIGNAL_ONSETS_NO_TAYLOR") is null },
                },
            };
            var clock = Stopwatch.StartNew();
            var report = NormalFormFit.Analysis.ManifestAnalyzer.Analyze(Path.Combine(dir, "manifest.csv"), options).Value;
            if (report is null)
            {
                Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"seed {seed}: no report"));
                continue;
            }

            string Line(NormalFormFit.Onset.OnsetEstimate e) => string.Create(CultureInfo.InvariantCulture,
                $"{e.Value:F4} ± {e.StandardError:F4} [{e.Ci95.Low:F4}, {e.Ci95.High:F4}] off {(e.Value - onset) / nearest:P0} {(e.Ci95.Low <= onset && onset <= e.Ci95.High ? "covers" : "MISSES")} deg {e.Trend?.Coefficients.Length - 1}");
            var aOver = string.Join(" ", report.Runs.Where(r => r.Bottleneck is not null).Select(r => string.Create(CultureInfo.InvariantCulture, $"{r.Bottleneck!.A.Value / (r.Param - onset):G3}")));
            if (Environment.GetEnvironmentVariable("SIGNAL_ONSETS_RUNS") is not null)
            {
                foreach (var r in report.Runs)
                {
                    var b = r.Bottleneck;
                    Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                        $"  {r.Param - onset,8:G4}: θ* {b?.Phase.Value:F3} a {b?.A.Value:G4} ± {b?.A.StandardError:G2} b {b?.B.Value:G4} T {r.Period?.Measured.Value:G5} π/√(ab) {r.Period?.FromBottleneck.Value:G5} L {r.SignalOrbit?.LoopLength:G4} delay {r.SignalOrbit?.Delay:G3} centre ({r.SignalOrbit?.CentreX:G4}, {r.SignalOrbit?.CentreY:G4}) left out {r.SignalOrbit?.CyclesLeftOut}/{r.SignalOrbit?.Cycles}"));
                    if (r.Field is { } f && Environment.GetEnvironmentVariable("SIGNAL_ONSETS_FIELD") is not null)
                    {
                        Console.WriteLine("    field " + string.Join(" ", Enumerable.Range(0, f.Centres.Length).Where(j => j % 2 == 0).Select(j => string.Create(CultureInfo.InvariantCulture, $"{f.Centres[j]:F2}:{f.Velocity[j]:G3}"))));
                    }
                }
            }

            Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"seed {seed}: bottleneck {Line(report.FromBottleneck)}; period {Line(report.FromPeriod)}; verdict {report.Verdict.Kind}; runs with a {report.Runs.Count(r => r.Bottleneck is not null)}; a/(I−Ic) {aOver}; {clock.Elapsed.TotalSeconds:F1} s"));
        }

        return 0;
    }

    // `signal-stages FILE`: one signal run's stages timed with a stopwatch (best of 3, one thread): reading, event
    // detection, the protophase, and the run analysis of the protophase.
    private static int SignalStages(string[] args)
    {
        var file = args[0];
        var best = new double[4];
        Array.Fill(best, double.MaxValue);
        var me = Process.GetCurrentProcess();
        double Cpu()
        {
            me.Refresh();
            return me.TotalProcessorTime.TotalSeconds;
        }

        for (var k = 0; k < 3; k++)
        {
            var c0 = Cpu();
            var rec = (SignalRecording)RunReader.ReadRecording(file, RunReadOptions.Default, file).Value!;
            var c1 = Cpu();
            var found = SignalEvents.Detect(rec).Value!;
            var c2 = Cpu();
            var (p, _, _) = SignalPhase.FromSignal(rec, found);
            var c3 = Cpu();
            NormalFormFit.Analysis.RunAnalyzer.Analyze(Trajectory.FromRecording(p!), 1, file, null, NormalFormFit.Analysis.RunOptions.Default);
            var c4 = Cpu();
            best[0] = Math.Min(best[0], c1 - c0);
            best[1] = Math.Min(best[1], c2 - c1);
            best[2] = Math.Min(best[2], c3 - c2);
            best[3] = Math.Min(best[3], c4 - c3);
        }

        Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"CPU seconds, best of 3: read {best[0]:F2}, events {best[1]:F2}, protophase {best[2]:F2}, run analysis {best[3]:F2}; total {best.Sum():F2}"));
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
