namespace NormalFormFit;

/// <summary>A value with its standard error.</summary>
/// <param name="Value">The estimate.</param>
/// <param name="StandardError">Its standard error (NaN when it could not be estimated).</param>
public readonly record struct Estimate(double Value, double StandardError)
{
    /// <summary>Formats as <c>value ± se</c> with the invariant culture.</summary>
    public override string ToString() =>
        string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{Value:G6} ± {StandardError:G2}");
}

/// <summary>A confidence interval; bounds may be infinite when the data cannot bound the quantity.</summary>
/// <param name="Low">Lower bound.</param>
/// <param name="High">Upper bound.</param>
public readonly record struct Interval(double Low, double High)
{
    /// <summary>True when <paramref name="x"/> lies in the closed interval.</summary>
    public bool Contains(double x) => x >= Low && x <= High;

    /// <summary>High − Low.</summary>
    public double Width => High - Low;

    /// <summary>An interval with no information.</summary>
    public static Interval Unbounded => new(double.NegativeInfinity, double.PositiveInfinity);
}
