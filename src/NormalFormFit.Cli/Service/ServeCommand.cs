using System.CommandLine;
using System.Net;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;

namespace NormalFormFit.Cli.Service;

/// <summary><c>nffit serve</c>: the lab service (docs/service.md).</summary>
internal static class ServeCommand
{
    /// <summary>Environment variable that may hold the access token.</summary>
    public const string TokenVariable = "NFFIT_SERVICE_TOKEN";

    /// <summary>Shortest access token accepted.</summary>
    public const int MinTokenLength = 16;

    public static Command Create(TextWriter stdout, TextWriter stderr)
    {
        var port = new Option<int>("--port") { Description = $"TCP port (default {ServiceSettings.DefaultPort}; 0: a free one, printed at start)", DefaultValueFactory = _ => ServiceSettings.DefaultPort };
        var data = new Option<string>("--data") { Description = "folder for the job table (jobs.db) and every job's files (default: nffit-data in the current folder)", DefaultValueFactory = _ => "nffit-data" };
        var bind = new Option<string>("--bind") { Description = $"address to listen on (default 127.0.0.1); any other than loopback needs an access token from --token-file or {TokenVariable}", DefaultValueFactory = _ => "127.0.0.1" };
        var tokenFile = new Option<string?>("--token-file") { Description = $"file whose first line is the access token every request must carry (Authorization: Bearer TOKEN); at least {MinTokenLength} characters" };
        var workers = new Option<int>("--workers") { Description = "analyses run at once (default: one per core)", DefaultValueFactory = _ => Environment.ProcessorCount };
        var queue = new Option<int>("--queue") { Description = $"analyses that may wait for a worker; one more upload is answered 503 with Retry-After (default {ServiceSettings.DefaultQueue})", DefaultValueFactory = _ => ServiceSettings.DefaultQueue };
        var maxUpload = new Option<int>("--max-upload-mb") { Description = $"largest upload in MiB, all files together (default {ServiceSettings.DefaultMaxUploadBytes / (1024 * 1024)})", DefaultValueFactory = _ => (int)(ServiceSettings.DefaultMaxUploadBytes / (1024 * 1024)) };
        var maxFiles = new Option<int>("--max-files") { Description = $"most files in one upload, the manifest included (default {ServiceSettings.DefaultMaxFiles})", DefaultValueFactory = _ => ServiceSettings.DefaultMaxFiles };
        var maxLine = new Option<int>("--max-line-bytes") { Description = $"longest line of an uploaded file in bytes (default {ServiceSettings.DefaultMaxLineBytes})", DefaultValueFactory = _ => ServiceSettings.DefaultMaxLineBytes };
        var cmd = new Command("serve", "Run the lab service: upload runs from a browser or over HTTP, get the same report as 'analyze'")
        {
            port, data, bind, tokenFile, workers, queue, maxUpload, maxFiles, maxLine,
        };
        cmd.SetAction(pr =>
        {
            if (Settings(pr.GetValue(port), pr.GetValue(data)!, pr.GetValue(bind)!, pr.GetValue(tokenFile), pr.GetValue(workers), pr.GetValue(queue), pr.GetValue(maxUpload), pr.GetValue(maxFiles), pr.GetValue(maxLine), stderr) is not { } settings)
            {
                return ExitCodes.BadInput;
            }

            return Serve(settings, stdout, stderr);
        });
        return cmd;
    }

    /// <summary>The settings, or null after one usage message.</summary>
    internal static ServiceSettings? Settings(int port, string data, string bind, string? tokenFile, int workers, int queue, int maxUploadMb, int maxFiles, int maxLine, TextWriter stderr)
    {
        string? Usage(string message)
        {
            stderr.WriteLine($"nffit: usage: {message}");
            return null;
        }

        if (port is < 0 or > 65535)
        {
            Usage("--port: expected 0 to 65535");
            return null;
        }

        if (workers < 1 || queue < 1 || maxUploadMb < 1 || maxFiles < 2 || maxLine < 80)
        {
            Usage("--workers, --queue and --max-upload-mb must be at least 1, --max-files at least 2 and --max-line-bytes at least 80");
            return null;
        }

        IPAddress address;
        if (bind.Equals("localhost", StringComparison.OrdinalIgnoreCase))
        {
            address = IPAddress.Loopback;
        }
        else if (!IPAddress.TryParse(bind, out address!))
        {
            Usage($"--bind: '{bind}' is not an IP address (e.g. 127.0.0.1, 0.0.0.0 or ::)");
            return null;
        }

        string? token;
        if (tokenFile is not null)
        {
            try
            {
                token = File.ReadLines(tokenFile).FirstOrDefault()?.Trim();
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                stderr.WriteLine($"nffit: {tokenFile}: error: cannot read the token file ({e.Message})");
                return null;
            }
        }
        else
        {
            token = Environment.GetEnvironmentVariable(TokenVariable)?.Trim();
        }

        token = string.IsNullOrEmpty(token) ? null : token;
        if (!IPAddress.IsLoopback(address) && token is null)
        {
            Usage($"--bind {bind} lets other machines in: give an access token in a file (--token-file FILE) or in the environment ({TokenVariable}); never on the command line");
            return null;
        }

        if (token is not null && (token.Length < MinTokenLength || token.Any(c => c <= ' ' || c > '~')))
        {
            Usage($"the access token must be at least {MinTokenLength} printable ASCII characters without blanks (e.g. from 'openssl rand -hex 24')");
            return null;
        }

        var folder = Path.GetFullPath(data);
        try
        {
            Directory.CreateDirectory(folder);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"nffit: {data}: error: cannot create the data folder ({e.Message})");
            return null;
        }

        return new ServiceSettings
        {
            DataDir = folder,
            Bind = address,
            Port = port,
            Workers = workers,
            Queue = queue,
            MaxUploadBytes = maxUploadMb * 1024L * 1024L,
            MaxFiles = maxFiles,
            MaxLineBytes = maxLine,
            Token = token,
        };
    }

    private static int Serve(ServiceSettings settings, TextWriter stdout, TextWriter stderr)
    {
        WebApplication app;
        try
        {
            app = ServiceHost.Build(settings);
            app.StartAsync().GetAwaiter().GetResult();
        }
        catch (Exception e) when (e is IOException or Microsoft.Data.Sqlite.SqliteException or UnauthorizedAccessException)
        {
            stderr.WriteLine($"nffit: serve: error: cannot start ({e.Message}); is the port in use, or the data folder not writable?");
            return ExitCodes.BadInput;
        }

        var address = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()?.Addresses.FirstOrDefault();
        stdout.WriteLine($"nffit: serving on {address}/ (data in {settings.DataDir}; {settings.Workers} workers, queue {settings.Queue}); Ctrl+C stops");
        stdout.Flush();
        app.WaitForShutdownAsync().GetAwaiter().GetResult();
        app.DisposeAsync().AsTask().GetAwaiter().GetResult();
        return ExitCodes.Ok;
    }
}
