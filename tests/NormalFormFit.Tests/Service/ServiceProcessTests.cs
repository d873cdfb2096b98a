using System.Diagnostics;
using System.Net;
using System.Text.Json;
using System.Text.RegularExpressions;

namespace NormalFormFit.Tests.Service;

/// <summary>
/// The service as a real process ('dotnet nffit.dll serve'), killed with SIGKILL and started again on the same data
/// folder: finished results are kept, an interrupted job is run again once, then marked failed with the reason.
/// </summary>
[Collection(SimulatedSweepGroup.Name)]
public class ServiceProcessTests(SimulatedSweep sweep)
{
    [Fact]
    public async Task KilledWhileAJobRuns_RestartKeepsFinishedResults_AndRunsTheInterruptedJobAgain()
    {
        var data = Directory.CreateTempSubdirectory("nffit-service-kill-").FullName;
        try
        {
            string first;
            byte[] firstReport;
            string second;
            using (var service = ServiceProcess.Start(data))
            {
                first = await service.Submit(sweep);
                Assert.Equal("done", (await service.WaitFor(first, "done", "failed")).GetProperty("status").GetString());
                firstReport = await service.Client.GetByteArrayAsync($"/analyses/{first}/report.json");
                second = await service.Submit(sweep);
                await service.WaitFor(second, "running");
                service.Kill();
            }

            // An upload that a dead process was still receiving: a job folder without a row in the table.
            var orphan = Path.Combine(data, "jobs", "0123456789abcdef0123456789abcdef");
            Directory.CreateDirectory(Path.Combine(orphan, "input"));
            File.WriteAllText(Path.Combine(orphan, "input", ".part-1.tmp"), "t,theta\n");

            using (var service = ServiceProcess.Start(data))
            {
                var kept = await service.WaitFor(first, "done");
                Assert.Equal(1, kept.GetProperty("attempts").GetInt32());
                Assert.Equal(firstReport, await service.Client.GetByteArrayAsync($"/analyses/{first}/report.json"));
                var rerun = await service.WaitFor(second, "done", "failed");
                Assert.Equal("done", rerun.GetProperty("status").GetString());
                Assert.Equal(2, rerun.GetProperty("attempts").GetInt32());
                Assert.Equal(await File.ReadAllBytesAsync(sweep.ReferenceJson), await service.Client.GetByteArrayAsync($"/analyses/{second}/report.json"));
                Assert.False(Directory.Exists(orphan), "the half-received upload was not removed at start");
            }
        }
        finally
        {
            Directory.Delete(data, recursive: true);
        }
    }

    [Fact]
    public async Task KilledTwiceWhileTheSameJobRuns_TheJobIsMarkedFailedWithTheReason_NotLeftRunning()
    {
        var data = Directory.CreateTempSubdirectory("nffit-service-kill2-").FullName;
        try
        {
            string id;
            using (var service = ServiceProcess.Start(data))
            {
                id = await service.Submit(sweep);
                await service.WaitFor(id, "running");
                service.Kill();
            }

            using (var service = ServiceProcess.Start(data))
            {
                var again = await service.WaitFor(id, "running");
                Assert.Equal(2, again.GetProperty("attempts").GetInt32());
                service.Kill();
            }

            using (var service = ServiceProcess.Start(data))
            {
                var job = JsonDocument.Parse(await service.Client.GetStringAsync($"/api/analyses/{id}")).RootElement;
                Assert.Equal("failed", job.GetProperty("status").GetString());
                Assert.Equal("interrupted", job.GetProperty("error").GetProperty("code").GetString());
                Assert.Contains("stopped 2 times", job.GetProperty("error").GetProperty("message").GetString(), StringComparison.Ordinal);

                // The service goes on taking work.
                var next = await service.Submit(sweep);
                Assert.Equal("done", (await service.WaitFor(next, "done", "failed")).GetProperty("status").GetString());
            }
        }
        finally
        {
            Directory.Delete(data, recursive: true);
        }
    }

    [Fact]
    public async Task BindingBeyondLoopback_WithoutAToken_IsRefusedAtStart()
    {
        var data = Directory.CreateTempSubdirectory("nffit-service-bind-").FullName;
        try
        {
            var (code, _, err) = SimulatedSweep.Cli("serve", "--bind", "0.0.0.0", "--port", "0", "--data", data, "--token-file", Path.Combine(data, "missing-token"));
            Assert.Equal(2, code);
            Assert.Contains("cannot read the token file", err, StringComparison.Ordinal);

            File.WriteAllText(Path.Combine(data, "short-token"), "abc\n");
            (code, _, err) = SimulatedSweep.Cli("serve", "--bind", "0.0.0.0", "--port", "0", "--data", data, "--token-file", Path.Combine(data, "short-token"));
            Assert.Equal(2, code);
            Assert.Contains("at least 16", err, StringComparison.Ordinal);

            var psi = ServiceProcess.Info(data, "--bind", "0.0.0.0");
            psi.Environment.Remove("NFFIT_SERVICE_TOKEN");
            using var p = Process.Start(psi)!;
            var stderr = p.StandardError.ReadToEndAsync();
            using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(60));
            await p.WaitForExitAsync(timeout.Token);
            Assert.Equal(2, p.ExitCode);
            var message = await stderr;
            Assert.Contains("--token-file", message, StringComparison.Ordinal);
            Assert.DoesNotContain("   at ", message, StringComparison.Ordinal);
        }
        finally
        {
            Directory.Delete(data, recursive: true);
        }
    }
}

/// <summary>'dotnet nffit.dll serve --port 0' on a data folder, with an HTTP client on the address it prints.</summary>
internal sealed partial class ServiceProcess : IDisposable
{
    private readonly Process process;

    private ServiceProcess(Process process, Uri address)
    {
        this.process = process;
        Client = new HttpClient { BaseAddress = address, Timeout = TimeSpan.FromSeconds(60) };
    }

    public HttpClient Client { get; }

    public static ProcessStartInfo Info(string data, params string[] extra)
    {
        var psi = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var a in new[] { Path.Combine(AppContext.BaseDirectory, "nffit.dll"), "serve", "--port", "0", "--data", data, "--workers", "1" }.Concat(extra))
        {
            psi.ArgumentList.Add(a);
        }

        return psi;
    }

    public static ServiceProcess Start(string data)
    {
        var process = Process.Start(Info(data))!;
        process.ErrorDataReceived += (_, _) => { };
        process.BeginErrorReadLine();
        var line = process.StandardOutput.ReadLineAsync();
        if (!line.Wait(TimeSpan.FromSeconds(90)) || line.Result is null || Address().Match(line.Result) is not { Success: true } m)
        {
            process.Kill(entireProcessTree: true);
            throw new InvalidOperationException($"serve did not print its address: '{(line.IsCompleted ? line.Result : "(nothing)")}'");
        }

        return new ServiceProcess(process, new Uri(m.Groups[1].Value));
    }

    [GeneratedRegex(@"serving on (http://[^/\s]+/)")]
    private static partial Regex Address();

    public async Task<string> Submit(SimulatedSweep sweep)
    {
        var response = await Client.PostAsync("/api/analyses", Multipart.Of(sweep).Content());
        Assert.Equal(HttpStatusCode.Accepted, response.StatusCode);
        return JsonDocument.Parse(await response.Content.ReadAsStringAsync()).RootElement.GetProperty("id").GetString()!;
    }

    /// <summary>Polls until the job is in one of <paramref name="states"/> (every 50 ms, at most 4 minutes).</summary>
    public async Task<JsonElement> WaitFor(string id, params string[] states)
    {
        var until = DateTime.UtcNow.AddMinutes(4);
        while (DateTime.UtcNow < until)
        {
            var job = JsonDocument.Parse(await Client.GetStringAsync($"/api/analyses/{id}")).RootElement.Clone();
            if (states.Contains(job.GetProperty("status").GetString()))
            {
                return job;
            }

            await Task.Delay(50);
        }

        throw new TimeoutException($"job {id} never reached {string.Join(" or ", states)}");
    }

    /// <summary>SIGKILL: no chance to clean up.</summary>
    public void Kill()
    {
        process.Kill(entireProcessTree: true);
        process.WaitForExit();
    }

    public void Dispose()
    {
        if (!process.HasExited)
        {
            Kill();
        }

        Client.Dispose();
        process.Dispose();
    }
}
