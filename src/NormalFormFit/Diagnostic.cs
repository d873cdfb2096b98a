namespace NormalFormFit;

/// <summary>How serious a <see cref="Diagnostic"/> is.</summary>
public enum Severity
{
    /// <summary>Worth knowing; the result stands.</summary>
    Info,

    /// <summary>The result stands but is qualified.</summary>
    Warning,

    /// <summary>The input cannot be used as given.</summary>
    Error,
}

/// <summary>
/// A message about the user's data: which file, line and column, what was found and what to do.
/// User errors are data; programmer errors throw.
/// </summary>
/// <param name="Severity">How serious it is.</param>
/// <param name="Code">A short stable identifier (for scripts), e.g. <c>few-revolutions</c>.</param>
/// <param name="Message">One plain sentence or two: what was found, what was expected, what to do.</param>
/// <param name="File">The file concerned, if any.</param>
/// <param name="Line">1-based line, if any.</param>
/// <param name="Column">1-based column, if any.</param>
public sealed record Diagnostic(
    Severity Severity,
    string Code,
    string Message,
    string? File = null,
    int? Line = null,
    int? Column = null)
{
    /// <summary>Formats as <c>file:line:column: severity: message</c>, leaving out what is unknown.</summary>
    public override string ToString()
    {
        var where = File is null ? string.Empty
            : Line is null ? $"{File}: "
            : Column is null ? $"{File}:{Line}: "
            : $"{File}:{Line}:{Column}: ";
        var level = Severity switch
        {
            Severity.Error => "error",
            Severity.Warning => "warning",
            _ => "note",
        };
        return $"{where}{level}: {Message}";
    }
}
