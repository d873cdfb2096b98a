namespace NormalFormFit.Ingest;

/// <summary>The outcome of reading user input: a value, or the diagnostics that explain why there is none.</summary>
/// <typeparam name="T">What was read.</typeparam>
/// <param name="Value">The value; null when an error prevented reading.</param>
/// <param name="Diagnostics">Errors, warnings and notes, in the order found.</param>
public sealed record Loaded<T>(T? Value, IReadOnlyList<Diagnostic> Diagnostics)
    where T : class
{
    /// <summary>True when a value was produced.</summary>
    public bool Succeeded => Value is not null;
}

/// <summary>Factory for failed <see cref="Loaded{T}"/> results.</summary>
public static class Loaded
{
    /// <summary>A failure with one error.</summary>
    public static Loaded<T> Fail<T>(Diagnostic error)
        where T : class => new(null, [error]);
}
