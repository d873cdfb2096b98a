namespace NormalFormFit.Field;

/// <summary>
/// The phase-velocity field θ̇(θ) of one run on the circle [0, 2π), in equal phase bins, with a pointwise
/// uncertainty from a block bootstrap over whole revolutions, and the period it predicts, ∮dθ/θ̇.
/// </summary>
/// <param name="Centres">Bin centres (radians, in [0, 2π)).</param>
/// <param name="Velocity">Phase-averaged θ̇ in each bin (NaN where no sample fell).</param>
/// <param name="StandardError">Bootstrap standard error of each bin's θ̇.</param>
/// <param name="Revolutions">Number of revolution blocks used.</param>
/// <param name="Period">T = ∮dθ/θ̇ from the field, with bootstrap standard error; NaN where θ̇ ≤ 0 somewhere.</param>
public sealed record PhaseField(double[] Centres, double[] Velocity, double[] StandardError, int Revolutions, Estimate Period)
{
    /// <summary>Bin width in radians.</summary>
    public double BinWidth => 2.0 * Math.PI / Centres.Length;

    /// <summary>θ̇ at any phase by periodic linear interpolation between bin centres (skipping empty bins).</summary>
    public double Interpolate(double phase)
    {
        var m = Centres.Length;
        var x = RevolutionBlocks.Wrap(phase) / BinWidth - 0.5;
        var j = (int)Math.Floor(x);
        var f = x - j;
        var lo = Velocity[((j % m) + m) % m];
        var hi = Velocity[(((j + 1) % m) + m) % m];
        if (!double.IsFinite(lo))
        {
            return hi;
        }

        return double.IsFinite(hi) ? lo + (f * (hi - lo)) : lo;
    }
}
