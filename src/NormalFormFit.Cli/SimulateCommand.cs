using System.CommandLine;

namespace NormalFormFit.Cli;

internal static class SimulateCommand
{
    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        _ = stdout;
        _ = stderr;
        return new Command("simulate", "Write synthetic runs and a manifest for a built-in model");
    }
}
