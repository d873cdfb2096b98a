using System.Net;

namespace NormalFormFit.Cli.Service;

/// <summary>How the lab service runs (docs/service.md gives every default and why).</summary>
internal sealed record ServiceSettings
{
    /// <summary>Default TCP port.</summary>
    public const int DefaultPort = 8640;

    /// <summary>Default number of jobs that may wait for a worker.</summary>
    public const int DefaultQueue = 32;

    /// <summary>Default limit on the bytes of one upload (all parts together).</summary>
    public const long DefaultMaxUploadBytes = 256L * 1024 * 1024;

    /// <summary>Default limit on the files of one upload (the manifest counts).</summary>
    public const int DefaultMaxFiles = 200;

    /// <summary>Default limit on the bytes of one line of an uploaded file.</summary>
    public const int DefaultMaxLineBytes = 64 * 1024;

    /// <summary>Limit on the bytes of one form field that is not a file.</summary>
    public const int MaxFieldBytes = 16 * 1024;

    /// <summary>Seconds a client is asked to wait (Retry-After) when the queue is full.</summary>
    public const int RetryAfterSeconds = 10;

    /// <summary>The folder that holds the job table and the job folders.</summary>
    public required string DataDir { get; init; }

    /// <summary>Address to listen on; loopback unless a token is set.</summary>
    public IPAddress Bind { get; init; } = IPAddress.Loopback;

    /// <summary>TCP port; 0 lets the system choose a free one (printed at start).</summary>
    public int Port { get; init; } = DefaultPort;

    /// <summary>Jobs analysed at once. Zero runs none (only tests use it, to hold jobs in the queue).</summary>
    public int Workers { get; init; } = Environment.ProcessorCount;

    /// <summary>Jobs that may wait for a worker; one more upload gets 503.</summary>
    public int Queue { get; init; } = DefaultQueue;

    /// <summary>Bytes of one upload, every part together.</summary>
    public long MaxUploadBytes { get; init; } = DefaultMaxUploadBytes;

    /// <summary>Files of one upload.</summary>
    public int MaxFiles { get; init; } = DefaultMaxFiles;

    /// <summary>Bytes of one line of an uploaded file.</summary>
    public int MaxLineBytes { get; init; } = DefaultMaxLineBytes;

    /// <summary>The access token every request must carry; null on loopback without one.</summary>
    public string? Token { get; init; }

    /// <summary>The folder of the job folders.</summary>
    public string JobsDir => Path.Combine(DataDir, "jobs");
}
