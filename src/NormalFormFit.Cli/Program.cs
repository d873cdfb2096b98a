namespace NormalFormFit.Cli;

internal static class Program
{
    private static int Main(string[] args) => NffitApp.Run(args, Console.Out, Console.Error);
}
