using System.IO.Compression;
using System.Net;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Http.Features;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Microsoft.Extensions.Logging;

namespace NormalFormFit.Cli.Service;

/// <summary>
/// The lab service (docs/service.md): the upload page, the JSON API and the report pages of stored jobs, on Kestrel
/// from the shared framework. <see cref="Build"/> is used by <c>nffit serve</c> and, with a test server, by the tests.
/// </summary>
internal static partial class ServiceHost
{
    /// <summary>Policy of the upload page and every other answer: only this origin, no inline script or style.</summary>
    public const string PagePolicy = "default-src 'self'; frame-ancestors 'none'; form-action 'self'; base-uri 'none'";

    /// <summary>Policy of a report page: its inline style and the figures' embedded fonts (the report is one file), no script at all.</summary>
    public const string ReportPolicy = "default-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; font-src 'self' data:; script-src 'none'; frame-ancestors 'none'; base-uri 'none'";

    /// <summary>Cookie that carries the access token for the pages a browser opens after it sent the token once.</summary>
    public const string AccessCookie = "nffit_access";

    /// <summary>Builds the service over <paramref name="settings"/>; <paramref name="web"/> may change the server (tests).</summary>
    public static WebApplication Build(ServiceSettings settings, Action<IWebHostBuilder>? web = null)
    {
        Directory.CreateDirectory(settings.JobsDir);
        var builder = WebApplication.CreateEmptyBuilder(new WebApplicationOptions { ContentRootPath = Path.GetFullPath(settings.DataDir) });
        builder.WebHost.UseKestrelCore().ConfigureKestrel(k =>
        {
            k.Listen(settings.Bind, settings.Port);
            k.Limits.MaxRequestBodySize = null; // The upload reader enforces the documented limits while streaming.
            k.AddServerHeader = false;
        });
        builder.Services.AddRoutingCore();
        builder.Logging.ClearProviders();
        builder.Services.AddSingleton<IHostLifetime, Microsoft.Extensions.Hosting.Internal.ConsoleLifetime>(); // Ctrl+C and SIGTERM stop it gracefully.
        web?.Invoke(builder.WebHost);

        var store = new JobStore(settings.DataDir);
        RemoveOrphans(settings, store);
        var queue = new JobQueue(store, settings);
        queue.Recover();
        builder.Services.AddSingleton(queue);
        builder.Services.AddHostedService(_ => new QueueService(queue, settings));

        var app = builder.Build();
        app.Use(async (ctx, next) =>
        {
            ctx.Response.Headers["X-Content-Type-Options"] = "nosniff";
            ctx.Response.Headers["Referrer-Policy"] = "no-referrer";
            ctx.Response.Headers.ContentSecurityPolicy = PagePolicy;
            try
            {
                if (IPAddress.IsLoopback(settings.Bind) && !LoopbackHost(ctx.Request.Host.Host))
                {
                    // A page elsewhere that points its own host name at 127.0.0.1 (DNS rebinding) must not reach the service.
                    await Error(ctx, StatusCodes.Status400BadRequest, "bad_host", "this service listens on loopback only: open it as http://127.0.0.1:PORT/ or http://localhost:PORT/").ConfigureAwait(false);
                    return;
                }

                if (settings.Token is { } token && !Allowed(ctx, token))
                {
                    ctx.Response.Headers.WWWAuthenticate = "Bearer";
                    await Error(ctx, StatusCodes.Status401Unauthorized, "unauthorized", "this service needs its access token: send 'Authorization: Bearer TOKEN' (the page asks for it)").ConfigureAwait(false);
                    return;
                }

                await next(ctx).ConfigureAwait(false);
            }
#pragma warning disable CA1031 // No stack trace ever reaches a client: one JSON message instead.
            catch (Exception e) when (e is not OperationCanceledException && !ctx.Response.HasStarted)
#pragma warning restore CA1031
            {
                await Error(ctx, StatusCodes.Status500InternalServerError, "internal", $"internal error ({e.GetType().Name}); this is a bug, please report it").ConfigureAwait(false);
            }
        });
        app.UseRouting();

        var readingOptions = new ReadingOptions().Names();
        app.MapGet("/", ctx => Page(ctx, "index.html", "text/html; charset=utf-8"));
        app.MapGet("/app.js", ctx => Page(ctx, "app.js", "text/javascript; charset=utf-8"));
        app.MapGet("/app.css", ctx => Page(ctx, "app.css", "text/css; charset=utf-8"));
        app.MapGet("/favicon.ico", ctx =>
        {
            ctx.Response.StatusCode = StatusCodes.Status204NoContent; // No icon; a 404 would be logged by browsers.
            return Task.CompletedTask;
        });
        app.MapGet("/api/options", ctx => Options(ctx, readingOptions));
        app.MapPost("/api/analyses", ctx => Submit(ctx, settings, store, queue, readingOptions));
        app.MapGet("/api/analyses/{id}", (HttpContext ctx, string id) => Status(ctx, settings, store, id));
        // The report page lives at /analyses/ID/ so that its relative links reach the job's files; without the
        // trailing slash the address redirects there.
        app.MapGet("/analyses/{id}", (HttpContext ctx, string id) =>
            ctx.Request.Path.Value!.EndsWith('/') ? ReportFile(ctx, settings, store, id, "report.html")
            : IdPattern().IsMatch(id) ? Redirect(ctx, $"/analyses/{id}/") : NotFound(ctx));
        app.MapGet("/analyses/{id}/report.zip", (HttpContext ctx, string id) => Zip(ctx, settings, store, id));
        app.MapGet("/analyses/{id}/{file}", (HttpContext ctx, string id, string file) => ReportFile(ctx, settings, store, id, file));
        return app;
    }

    [GeneratedRegex("^[0-9a-f]{32}$", RegexOptions.CultureInvariant)]
    private static partial Regex IdPattern();

    /// <summary>Whether a Host header names this machine's loopback interface.</summary>
    private static bool LoopbackHost(string host) =>
        host.Equals("localhost", StringComparison.OrdinalIgnoreCase) || (IPAddress.TryParse(host.Trim('[', ']'), out var ip) && IPAddress.IsLoopback(ip));

    /// <summary>The token from a Bearer header or the cookie a Bearer request set (fixed-time comparison).</summary>
    private static bool Allowed(HttpContext ctx, string token)
    {
        var path = ctx.Request.Path.Value ?? "/";
        if (path is "/" or "/app.js" or "/app.css" or "/favicon.ico")
        {
            return true; // The page itself holds no data; it asks for the token.
        }

        var header = ctx.Request.Headers.Authorization.ToString();
        var fromHeader = header.StartsWith("Bearer ", StringComparison.Ordinal) ? header["Bearer ".Length..].Trim() : null;
        var given = fromHeader ?? ctx.Request.Cookies[AccessCookie];
        if (given is null || !CryptographicOperations.FixedTimeEquals(Encoding.UTF8.GetBytes(given), Encoding.UTF8.GetBytes(token)))
        {
            return false;
        }

        if (fromHeader is not null)
        {
            ctx.Response.Cookies.Append(AccessCookie, given, new CookieOptions { HttpOnly = true, SameSite = SameSiteMode.Strict, Path = "/", Secure = ctx.Request.IsHttps });
        }

        return true;
    }

    private static async Task Page(HttpContext ctx, string name, string type)
    {
        using var resource = typeof(ServiceHost).Assembly.GetManifestResourceStream("nffit.page." + name)
            ?? throw new InvalidOperationException($"page resource {name} is missing from the build");
        ctx.Response.ContentType = type;
        ctx.Response.Headers.CacheControl = "no-cache";
        await resource.CopyToAsync(ctx.Response.Body, ctx.RequestAborted).ConfigureAwait(false);
    }

    /// <summary>The reading options the API takes (name and whether it is a switch), for the page.</summary>
    private static Task Options(HttpContext ctx, IReadOnlyDictionary<string, bool> names) =>
        Json(ctx, StatusCodes.Status200OK, w =>
        {
            w.WriteStartArray("reading_options");
            foreach (var (name, isSwitch) in names)
            {
                w.WriteStartObject();
                w.WriteString("name", name);
                w.WriteBoolean("switch", isSwitch);
                w.WriteEndObject();
            }

            w.WriteEndArray();
        });

    private static async Task Submit(HttpContext ctx, ServiceSettings settings, JobStore store, JobQueue queue, IReadOnlyDictionary<string, bool> readingOptions)
    {
        // A form on another site may post here from a visitor's browser (no preflight for multipart forms); browsers
        // name the page's origin, which must be this service.
        if (ctx.Request.Headers.Origin.ToString() is { Length: > 0 } origin
            && (!Uri.TryCreate(origin, UriKind.Absolute, out var from) || !string.Equals(from.Authority, ctx.Request.Host.Value, StringComparison.OrdinalIgnoreCase)))
        {
            await Error(ctx, StatusCodes.Status403Forbidden, "cross_origin", "uploads are taken from this service's own page only").ConfigureAwait(false);
            return;
        }

        if (!queue.TryReserve())
        {
            ctx.Response.Headers.RetryAfter = ServiceSettings.RetryAfterSeconds.ToString(System.Globalization.CultureInfo.InvariantCulture);
            await Error(ctx, StatusCodes.Status503ServiceUnavailable, "queue_full", $"{settings.Queue} analyses are waiting already; try again in a little while").ConfigureAwait(false);
            return;
        }

        var id = Guid.NewGuid().ToString("N");
        var folder = JobRun.Folder(settings, id);
        var queued = false;
        try
        {
            var input = Directory.CreateDirectory(Path.Combine(folder, "input")).FullName;
            List<string> options;
            try
            {
                options = await new UploadReader(settings, readingOptions).ReadAsync(ctx.Request, input, ctx.RequestAborted).ConfigureAwait(false);
            }
            catch (UploadRefusedException e)
            {
                await Error(ctx, e.Status, e.Code, e.Message).ConfigureAwait(false);
                return;
            }
            catch (Exception e) when (e is InvalidDataException or IOException && !ctx.RequestAborted.IsCancellationRequested)
            {
                await Error(ctx, StatusCodes.Status400BadRequest, "bad_multipart", $"the multipart body could not be read ({e.Message})").ConfigureAwait(false);
                return;
            }

            store.Add(id, string.Join('\n', options));
            queue.Enqueue(id, holdsPlace: true);
            queued = true;
            ctx.Response.Headers.Location = $"/api/analyses/{id}";
            await Json(ctx, StatusCodes.Status202Accepted, w =>
            {
                w.WriteString("id", id);
                w.WriteString("status", JobStatus.Queued);
            }).ConfigureAwait(false);
        }
        finally
        {
            if (!queued)
            {
                queue.Release();
                if (Directory.Exists(folder))
                {
                    Directory.Delete(folder, recursive: true);
                }
            }
        }
    }

    private static async Task Status(HttpContext ctx, ServiceSettings settings, JobStore store, string id)
    {
        if (!IdPattern().IsMatch(id) || store.Find(id) is not { } job)
        {
            await NotFound(ctx).ConfigureAwait(false);
            return;
        }

        var reportPath = Path.Combine(JobRun.Folder(settings, id), "report.json");
        var report = job.Status == JobStatus.Done ? await File.ReadAllBytesAsync(reportPath, ctx.RequestAborted).ConfigureAwait(false) : null;
        await Json(ctx, StatusCodes.Status200OK, w =>
        {
            w.WriteString("id", job.Id);
            w.WriteString("status", job.Status);
            w.WriteString("created", job.Created);
            w.WriteString("started", job.Started);
            w.WriteString("finished", job.Finished);
            w.WriteNumber("attempts", job.Attempts);
            if (report is not null)
            {
                w.WritePropertyName("report");
                w.WriteRawValue(report, skipInputValidation: false);
                w.WriteString("page", $"/analyses/{id}/");
                w.WriteString("zip", $"/analyses/{id}/report.zip");
            }

            if (job.Status == JobStatus.Failed)
            {
                w.WriteStartObject("error");
                w.WriteString("code", job.ErrorCode);
                w.WriteString("message", job.ErrorMessage);
                w.WriteEndObject();
            }
        }).ConfigureAwait(false);
    }

    /// <summary>The regular files directly in a done job's report folder, by name (no links, no sub-folders).</summary>
    private static Dictionary<string, string>? ReportFiles(ServiceSettings settings, JobStore store, string id)
    {
        if (!IdPattern().IsMatch(id) || store.Find(id) is not { Status: JobStatus.Done })
        {
            return null;
        }

        var dir = new DirectoryInfo(Path.Combine(JobRun.Folder(settings, id), "report"));
        return dir.Exists
            ? dir.EnumerateFiles().Where(f => (f.Attributes & FileAttributes.ReparsePoint) == 0 && !f.Name.StartsWith('.')).ToDictionary(f => f.Name, f => f.FullName, StringComparer.Ordinal)
            : null;
    }

    private static async Task ReportFile(HttpContext ctx, ServiceSettings settings, JobStore store, string id, string file)
    {
        if (ReportFiles(settings, store, id) is not { } files || !files.TryGetValue(file, out var path))
        {
            await NotFound(ctx).ConfigureAwait(false);
            return;
        }

        ctx.Response.ContentType = Path.GetExtension(file).ToUpperInvariant() switch
        {
            ".HTML" => "text/html; charset=utf-8",
            ".PNG" => "image/png",
            ".SVG" => "image/svg+xml",
            ".JSON" => "application/json",
            ".CSV" => "text/csv; charset=utf-8",
            _ => "text/plain; charset=utf-8",
        };
        ctx.Response.Headers.ContentSecurityPolicy = ReportPolicy;
        await ctx.Response.SendFileAsync(path, ctx.RequestAborted).ConfigureAwait(false);
    }

    /// <summary>The report folder as a zip, built from the job's own report files only.</summary>
    private static async Task Zip(HttpContext ctx, ServiceSettings settings, JobStore store, string id)
    {
        if (ReportFiles(settings, store, id) is not { } files)
        {
            await NotFound(ctx).ConfigureAwait(false);
            return;
        }

        using var buffer = new MemoryStream();
        using (var zip = new ZipArchive(buffer, ZipArchiveMode.Create, leaveOpen: true))
        {
            foreach (var (name, path) in files.OrderBy(f => f.Key, StringComparer.Ordinal))
            {
                await zip.CreateEntryFromFileAsync(path, "report/" + name, CompressionLevel.Optimal, ctx.RequestAborted).ConfigureAwait(false);
            }
        }

        ctx.Response.ContentType = "application/zip";
        ctx.Response.Headers.ContentDisposition = $"attachment; filename=\"nffit-{id}.zip\"";
        ctx.Response.ContentLength = buffer.Length;
        buffer.Position = 0;
        await buffer.CopyToAsync(ctx.Response.Body, ctx.RequestAborted).ConfigureAwait(false);
    }

    private static Task Redirect(HttpContext ctx, string to)
    {
        ctx.Response.StatusCode = StatusCodes.Status301MovedPermanently;
        ctx.Response.Headers.Location = to;
        return Task.CompletedTask;
    }

    private static Task NotFound(HttpContext ctx) => Error(ctx, StatusCodes.Status404NotFound, "not_found", "no analysis with that id (or it has no report yet)");

    /// <summary>An error answer: <c>{"error": {"code", "message"}}</c>.</summary>
    public static Task Error(HttpContext ctx, int status, string code, string message) =>
        Json(ctx, status, w =>
        {
            w.WriteStartObject("error");
            w.WriteString("code", code);
            w.WriteString("message", message);
            w.WriteEndObject();
        });

    private static async Task Json(HttpContext ctx, int status, Action<Utf8JsonWriter> body)
    {
        using var buffer = new MemoryStream();
        using (var w = new Utf8JsonWriter(buffer, new JsonWriterOptions { Indented = true, Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            w.WriteStartObject();
            body(w);
            w.WriteEndObject();
        }

        ctx.Response.StatusCode = status;
        ctx.Response.ContentType = "application/json; charset=utf-8";
        ctx.Response.ContentLength = buffer.Length;
        await ctx.Response.Body.WriteAsync(buffer.ToArray(), ctx.RequestAborted).ConfigureAwait(false);
    }

    /// <summary>Starts and stops the queue's workers with the host.</summary>
    private sealed class QueueService(JobQueue queue, ServiceSettings settings) : IHostedService
    {
        public Task StartAsync(CancellationToken cancellationToken)
        {
            queue.StartWorkers(settings.Workers);
            return Task.CompletedTask;
        }

        public Task StopAsync(CancellationToken cancellationToken) => queue.StopAsync(cancellationToken);
    }

    /// <summary>Deletes job folders of uploads that a dead process was still receiving (no job row).</summary>
    private static void RemoveOrphans(ServiceSettings settings, JobStore store)
    {
        var known = store.Ids();
        foreach (var dir in Directory.EnumerateDirectories(settings.JobsDir))
        {
            var name = Path.GetFileName(dir);
            if (IdPattern().IsMatch(name) && !known.Contains(name))
            {
                Directory.Delete(dir, recursive: true);
            }
        }
    }
}
