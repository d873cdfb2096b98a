namespace NormalFormFit.Field;

/// <summary>
/// Labels every sample with the revolution it belongs to, revolutions being cut where the unwrapped
/// phase passes <c>cut + 2πk</c>. Whole revolutions are the blocks of the block bootstrap: samples along
/// one trajectory are correlated, revolutions much less so (common practice, no source).
/// </summary>
public static class RevolutionBlocks
{
    /// <summary>Returns block labels 0…count−1 for <paramref name="phase"/> (unwrapped, increasing on average).</summary>
    public static int[] Label(ReadOnlySpan<double> phase, double cut, out int count)
    {
        var labels = new int[phase.Length];
        if (phase.Length == 0)
        {
            count = 0;
            return labels;
        }

        var twoPi = 2.0 * Math.PI;
        var first = Math.Floor((phase[0] - cut) / twoPi);
        var max = 0;
        var current = 0;
        for (var i = 0; i < phase.Length; i++)
        {
            // Revolutions only advance: a brief backward excursion stays in its revolution.
            var k = (int)Math.Max(0, Math.Floor((phase[i] - cut) / twoPi) - first);
            if (k > current)
            {
                current = k;
            }

            labels[i] = current;
            max = current;
        }

        count = max + 1;
        return labels;
    }

    /// <summary>Wraps an angle into [0, 2π).</summary>
    public static double Wrap(double x)
    {
        var twoPi = 2.0 * Math.PI;
        var r = x % twoPi;
        return r < 0 ? r + twoPi : r;
    }

    /// <summary>Wraps an angle difference into [−π, π).</summary>
    public static double WrapSigned(double x) => Wrap(x + Math.PI) - Math.PI;
}
