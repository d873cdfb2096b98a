namespace NormalFormFit.Cli;

/// <summary>Documented exit codes (README, "Exit codes").</summary>
internal static class ExitCodes
{
    /// <summary>Done; warnings may have been printed.</summary>
    public const int Ok = 0;

    /// <summary>Bad input or usage: the message names file, line and column.</summary>
    public const int BadInput = 2;

    /// <summary>The data are valid but cannot answer the question (e.g. fewer than three turning runs).</summary>
    public const int CannotAnswer = 3;

    /// <summary>Internal error: a bug. One line of message; details with --verbose.</summary>
    public const int Internal = 70;
}
