namespace NormalFormFit.Bottleneck;

/// <summary>
/// Residuals of the bottleneck fit θ̇ − (a + b(θ−θ*)²), averaged in a bin of phase offset from θ*.
/// </summary>
/// <param name="Offset">Bin centre, θ − θ* (radians).</param>
/// <param name="Residual">Time-weighted mean residual in the bin (rad per time unit).</param>
/// <param name="StandardError">Standard error of that mean from its spread over revolutions (NaN with fewer than two).</param>
/// <param name="Samples">Samples in the bin.</param>
public readonly record struct ResidualBin(double Offset, double Residual, double StandardError, int Samples);
