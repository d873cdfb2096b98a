namespace NormalFormFit.Cli.Service;

/// <summary>
/// Runs one job through the command line's own <c>analyze</c> (<see cref="NffitApp.Run"/>), so that the service
/// writes the same report JSON and report folder and gives the same messages as the command line.
/// </summary>
internal static class JobRun
{
    /// <summary>The job's folder under the data folder.</summary>
    public static string Folder(ServiceSettings settings, string id) => Path.Combine(settings.JobsDir, id);

    /// <summary>Analyses a job that <see cref="JobStore.Start"/> marked running and stores the outcome.</summary>
    public static void Run(JobStore store, ServiceSettings settings, string id)
    {
        var job = store.Find(id);
        if (job is null)
        {
            return;
        }

        try
        {
            var (code, message) = Analyze(Folder(settings, id), job.Params.Split('\n', StringSplitOptions.RemoveEmptyEntries));
            if (code is null)
            {
                store.Finish(id);
            }
            else
            {
                store.Fail(id, code, message);
            }
        }
#pragma warning disable CA1031 // One job's bug must not stop the service: the job fails with the reason.
        catch (Exception e)
#pragma warning restore CA1031
        {
            store.Fail(id, JobErrors.Internal, $"internal error ({e.GetType().Name}: {e.Message}); this is a bug, please report it with the files that caused it");
        }
    }

    /// <summary>
    /// Runs <c>analyze</c> on the job's manifest with its options; null code when the report was written, else the
    /// error code and analyze's messages (paths shown relative to the upload, as the user named the files).
    /// </summary>
    public static (string? Code, string Message) Analyze(string folder, IReadOnlyList<string> options)
    {
        var input = Path.Combine(folder, "input");
        var report = Path.Combine(folder, "report");
        var json = Path.Combine(folder, "report.json");

        // A job run again after a crash starts from its upload alone.
        if (Directory.Exists(report))
        {
            Directory.Delete(report, recursive: true);
        }

        File.Delete(json);
        foreach (var leftover in Directory.EnumerateDirectories(folder, ".report.*"))
        {
            Directory.Delete(leftover, recursive: true);
        }

        string[] args = ["analyze", Path.Combine(input, "manifest.csv"), "--json", json, "--out", report, "--quiet", "--threads", "1", .. options];
        using var stdout = new StringWriter();
        using var stderr = new StringWriter();
        var exit = NffitApp.Run(args, stdout, stderr);
        var message = stderr.ToString()
            .Replace(input + Path.DirectorySeparatorChar, string.Empty, StringComparison.Ordinal)
            .Replace(folder + Path.DirectorySeparatorChar, string.Empty, StringComparison.Ordinal)
            .TrimEnd();
        return exit switch
        {
            ExitCodes.Ok when File.Exists(json) => (null, message),
            ExitCodes.BadInput => (JobErrors.BadInput, message),
            ExitCodes.CannotAnswer => (JobErrors.CannotAnswer, message),
            _ => (JobErrors.Internal, message.Length > 0 ? message : "the analysis ended without a report; this is a bug"),
        };
    }
}
