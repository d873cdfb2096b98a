using NormalFormFit.Cli;

namespace NormalFormFit.Tests.Cli;

/// <summary>Runs the command line in-process with captured writers.</summary>
internal static class CliTestHost
{
    public static (int Code, string Out, string Err) Run(params string[] args)
    {
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();
        var code = NffitApp.Run(args, stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }

    /// <summary>A fresh temporary folder, deleted with the returned handle.</summary>
    public static TempFolder NewFolder() => new();

    internal sealed class TempFolder : IDisposable
    {
        public TempFolder()
        {
            Path = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "nffit-test-" + Guid.NewGuid().ToString("N"));
            Directory.CreateDirectory(Path);
        }

        public string Path { get; }

        public string File(string name) => System.IO.Path.Combine(Path, name);

        public void Dispose() => Directory.Delete(Path, recursive: true);
    }
}
