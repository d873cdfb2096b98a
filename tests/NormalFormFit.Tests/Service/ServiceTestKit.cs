using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.TestHost;
using NormalFormFit.Cli;
using NormalFormFit.Cli.Service;

namespace NormalFormFit.Tests.Service;

/// <summary>
/// A small simulated sweep (six runs of the normal form with noise, written by 'nffit simulate') and the JSON that
/// 'nffit analyze --json' gives on it: the reference every service answer is held to.
/// </summary>
public sealed class SimulatedSweep : IDisposable
{
    public SimulatedSweep()
    {
        Root = Directory.CreateTempSubdirectory("nffit-service-").FullName;
        Data = Path.Combine(Root, "data");
        var (code, _, err) = Cli("simulate", "--params", "1.02,1.04,1.07,1.1,1.2,1.3", "--out", Data, "--noise", "0.01", "--revolutions", "5", "--quiet");
        Assert.True(code == 0, err);
        ReferenceJson = Path.Combine(Root, "cli.json");
        (code, _, err) = Cli("analyze", Manifest, "--json", ReferenceJson, "--quiet");
        Assert.True(code == 0, err);
    }

    public string Root { get; }

    public string Data { get; }

    public string Manifest => Path.Combine(Data, "manifest.csv");

    /// <summary>What 'nffit analyze manifest.csv --json FILE' wrote.</summary>
    public string ReferenceJson { get; }

    public IEnumerable<string> RunFiles => Directory.GetFiles(Data, "run-*.csv").Order(StringComparer.Ordinal);

    public static (int Code, string Out, string Err) Cli(params string[] args) => Tests.Cli.CliTestHost.Run(args);

    public void Dispose() => Directory.Delete(Root, recursive: true);
}

[CollectionDefinition(Name)]
public sealed class SimulatedSweepGroup : ICollectionFixture<SimulatedSweep>
{
    public const string Name = "simulated sweep for the service";
}

/// <summary>The service in-process on a test server, over its own data folder.</summary>
internal sealed class InProcessService : IAsyncDisposable
{
    private readonly WebApplication app;

    private InProcessService(WebApplication app, ServiceSettings settings)
    {
        this.app = app;
        Settings = settings;
        Client = app.GetTestClient();
    }

    public ServiceSettings Settings { get; }

    public HttpClient Client { get; }

    public static async Task<InProcessService> Start(Func<ServiceSettings, ServiceSettings>? change = null, string? dataDir = null)
    {
        var settings = new ServiceSettings { DataDir = dataDir ?? Directory.CreateTempSubdirectory("nffit-service-data-").FullName, Workers = 2 };
        settings = change?.Invoke(settings) ?? settings;
        var app = ServiceHost.Build(settings, web => web.UseTestServer());
        await app.StartAsync();
        return new InProcessService(app, settings);
    }

    /// <summary>Every file under the data folder, relative to it.</summary>
    public List<string> Files() =>
        Directory.EnumerateFiles(Settings.DataDir, "*", SearchOption.AllDirectories).Select(f => Path.GetRelativePath(Settings.DataDir, f)).Order(StringComparer.Ordinal).ToList();

    public async Task<(HttpStatusCode Status, JsonElement Body, HttpResponseMessage Response)> Post(Multipart body)
    {
        var response = await Client.PostAsync("/api/analyses", body.Content());
        var text = await response.Content.ReadAsStringAsync();
        return (response.StatusCode, JsonDocument.Parse(text).RootElement.Clone(), response);
    }

    /// <summary>Polls the job until it is done or failed (at most <paramref name="seconds"/>).</summary>
    public async Task<JsonElement> WaitFor(string id, int seconds = 240)
    {
        var until = DateTime.UtcNow.AddSeconds(seconds);
        while (DateTime.UtcNow < until)
        {
            var job = JsonDocument.Parse(await Client.GetStringAsync($"/api/analyses/{id}")).RootElement.Clone();
            if (job.GetProperty("status").GetString() is "done" or "failed")
            {
                return job;
            }

            await Task.Delay(200);
        }

        throw new TimeoutException($"job {id} did not end within {seconds} s");
    }

    public async ValueTask DisposeAsync()
    {
        await app.StopAsync();
        await app.DisposeAsync();
        Directory.Delete(Settings.DataDir, recursive: true);
    }
}

/// <summary>A multipart/form-data body written byte by byte, so that a test can send any file name, even a hostile one.</summary>
internal sealed class Multipart
{
    private const string Boundary = "nffit-test-boundary-7d1f";
    private readonly List<(string Field, string? FileName, byte[] Bytes)> parts = [];

    public static Multipart Of(SimulatedSweep sweep, bool manifest = true)
    {
        var m = new Multipart();
        if (manifest)
        {
            m.File(sweep.Manifest);
        }

        foreach (var f in sweep.RunFiles)
        {
            m.File(f);
        }

        return m;
    }

    public Multipart File(string path, string? name = null) => File(name ?? Path.GetFileName(path), System.IO.File.ReadAllBytes(path));

    public Multipart File(string name, byte[] bytes)
    {
        parts.Add(("files", name, bytes));
        return this;
    }

    public Multipart Text(string name, string text) => File(name, Encoding.UTF8.GetBytes(text));

    public Multipart Field(string name, string value)
    {
        parts.Add((name, null, Encoding.UTF8.GetBytes(value)));
        return this;
    }

    public byte[] Bytes()
    {
        using var s = new MemoryStream();
        foreach (var (field, fileName, bytes) in parts)
        {
            var head = $"--{Boundary}\r\nContent-Disposition: form-data; name=\"{field}\"" + (fileName is null ? string.Empty : $"; filename=\"{fileName}\"") + "\r\n\r\n";
            s.Write(Encoding.UTF8.GetBytes(head));
            s.Write(bytes);
            s.Write("\r\n"u8);
        }

        s.Write(Encoding.UTF8.GetBytes($"--{Boundary}--\r\n"));
        return s.ToArray();
    }

    public HttpContent Content()
    {
        var content = new ByteArrayContent(Bytes());
        content.Headers.ContentType = MediaTypeHeaderValue.Parse($"multipart/form-data; boundary={Boundary}");
        return content;
    }

    public static HttpContent Streamed(Stream body)
    {
        var content = new StreamContent(body);
        content.Headers.ContentType = MediaTypeHeaderValue.Parse($"multipart/form-data; boundary={Boundary}");
        return content;
    }

    public const string Head = "--" + Boundary + "\r\nContent-Disposition: form-data; name=\"files\"; filename=\"endless.csv\"\r\n\r\n";
}
