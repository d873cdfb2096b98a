namespace NormalFormFit.Simulation;

/// <summary>
/// Standard normal variates from a seeded <see cref="Random"/> by the Box–Muller transform (Box &amp; Muller 1958):
/// z₀ = √(−2 ln u₁) cos 2πu₂, z₁ = √(−2 ln u₁) sin 2πu₂, both used. Not thread-safe: one source per run.
/// </summary>
internal sealed class GaussianSource
{
    private readonly Random random;
    private double spare;
    private bool hasSpare;

    /// <summary>Creates a source over the given generator, which it then owns.</summary>
    public GaussianSource(Random random) => this.random = random;

    /// <summary>A seeded source whose stream depends only on <paramref name="seed"/> and <paramref name="stream"/>.</summary>
    public static GaussianSource Create(int seed, int stream) => new(new Random(DeriveSeed(seed, stream)));

    /// <summary>The underlying uniform generator, for draws that are not Gaussian.</summary>
    public Random Uniform => random;

    /// <summary>
    /// Independent-looking seeds for the separate random streams of one run, so that, e.g., the dynamic-noise path
    /// does not change when measurement noise is switched on. SplitMix64 finaliser (Steele, Lea &amp; Flood 2014).
    /// </summary>
    public static int DeriveSeed(int seed, int stream)
    {
        unchecked
        {
            var z = ((ulong)(uint)seed << 8) + (ulong)stream + 0x9E3779B97F4A7C15UL;
            z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
            z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
            z ^= z >> 31;
            return (int)(z >> 33); // 31 bits: a non-negative seed.
        }
    }

    /// <summary>The next standard normal variate.</summary>
    public double Next()
    {
        if (hasSpare)
        {
            hasSpare = false;
            return spare;
        }

        // 1 − U lies in (0, 1], so the logarithm is finite.
        var radius = Math.Sqrt(-2.0 * Math.Log(1.0 - random.NextDouble()));
        var angle = 2.0 * Math.PI * random.NextDouble();
        var (sin, cos) = Math.SinCos(angle);
        spare = radius * sin;
        hasSpare = true;
        return radius * cos;
    }
}
