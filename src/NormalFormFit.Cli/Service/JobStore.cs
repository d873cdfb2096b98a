using System.Globalization;
using Microsoft.Data.Sqlite;

namespace NormalFormFit.Cli.Service;

/// <summary>One analysis job as stored.</summary>
/// <param name="Id">32 lower-case hexadecimal digits.</param>
/// <param name="Status">queued, running, done or failed (<see cref="JobStatus"/>).</param>
/// <param name="Created">When the upload was accepted (UTC, ISO 8601).</param>
/// <param name="Started">When the last attempt started.</param>
/// <param name="Finished">When it ended.</param>
/// <param name="Attempts">How many times a worker started it.</param>
/// <param name="ErrorCode">Why it failed (<see cref="JobErrors"/>).</param>
/// <param name="ErrorMessage">The message, as analyze prints it, with the job's folder left out of paths.</param>
/// <param name="Params">The command-line options of the analysis, one per line.</param>
internal sealed record Job(string Id, string Status, string Created, string? Started, string? Finished, int Attempts, string? ErrorCode, string? ErrorMessage, string Params);

/// <summary>The states of a job.</summary>
internal static class JobStatus
{
    public const string Queued = "queued";
    public const string Running = "running";
    public const string Done = "done";
    public const string Failed = "failed";
}

/// <summary>The error codes of a failed job (docs/service.md).</summary>
internal static class JobErrors
{
    /// <summary>A run file or the manifest could not be read (analyze's exit code 2).</summary>
    public const string BadInput = "bad_input";

    /// <summary>The runs are valid but cannot answer (analyze's exit code 3).</summary>
    public const string CannotAnswer = "cannot_answer";

    /// <summary>The service stopped twice while the job ran.</summary>
    public const string Interrupted = "interrupted";

    /// <summary>A bug.</summary>
    public const string Internal = "internal";
}

/// <summary>
/// The job table in SQLite (Microsoft.Data.Sqlite) at <c>DATA/jobs.db</c>: every state change is one committed
/// statement, so a killed process leaves each job in its last state (write-ahead log, synchronous=FULL).
/// </summary>
internal sealed class JobStore
{
    /// <summary>Starts of one job before a restart marks it failed instead of running it again.</summary>
    public const int MaxAttempts = 2;

    private readonly string connection;
    private readonly Lock gate = new();

    public JobStore(string dataDir)
    {
        connection = new SqliteConnectionStringBuilder { DataSource = Path.Combine(dataDir, "jobs.db"), Pooling = false }.ToString();
        Execute("""
            PRAGMA journal_mode=WAL;
            CREATE TABLE IF NOT EXISTS jobs(
              id TEXT PRIMARY KEY,
              status TEXT NOT NULL,
              created TEXT NOT NULL,
              started TEXT,
              finished TEXT,
              attempts INTEGER NOT NULL DEFAULT 0,
              error_code TEXT,
              error_message TEXT,
              params TEXT NOT NULL);
            """);
    }

    /// <summary>Adds a job that waits for a worker.</summary>
    public void Add(string id, string parameters) =>
        Execute("INSERT INTO jobs(id, status, created, params) VALUES($id, 'queued', $now, $params)", ("$id", id), ("$now", Now()), ("$params", parameters));

    /// <summary>Marks a job running and counts the attempt; false when it is not queued.</summary>
    public bool Start(string id) =>
        Execute("UPDATE jobs SET status='running', started=$now, finished=NULL, attempts=attempts+1 WHERE id=$id AND status='queued'", ("$id", id), ("$now", Now())) == 1;

    /// <summary>Marks a running job done.</summary>
    public void Finish(string id) =>
        Execute("UPDATE jobs SET status='done', finished=$now, error_code=NULL, error_message=NULL WHERE id=$id", ("$id", id), ("$now", Now()));

    /// <summary>Marks a job failed with a code and a message.</summary>
    public void Fail(string id, string code, string message) =>
        Execute("UPDATE jobs SET status='failed', finished=$now, error_code=$code, error_message=$message WHERE id=$id", ("$id", id), ("$now", Now()), ("$code", code), ("$message", message));

    /// <summary>The job, or null for an unknown id.</summary>
    public Job? Find(string id) => Query("SELECT id, status, created, started, finished, attempts, error_code, error_message, params FROM jobs WHERE id=$id", ("$id", id)).FirstOrDefault();

    /// <summary>Every job id.</summary>
    public HashSet<string> Ids() => Query("SELECT id, status, created, started, finished, attempts, error_code, error_message, params FROM jobs").Select(j => j.Id).ToHashSet(StringComparer.Ordinal);

    /// <summary>
    /// After a start: a job left running by a process that died is queued again when it has been started fewer
    /// than <see cref="MaxAttempts"/> times, else marked failed with the reason. Returns the queued jobs, oldest first.
    /// </summary>
    public IReadOnlyList<string> Recover()
    {
        Execute($"UPDATE jobs SET status='queued' WHERE status='running' AND attempts < {MaxAttempts.ToString(CultureInfo.InvariantCulture)}");
        Execute($"UPDATE jobs SET status='failed', finished=$now, error_code='{JobErrors.Interrupted}', error_message=$message WHERE status='running'",
            ("$now", Now()),
            ("$message", $"the service stopped {MaxAttempts.ToString(CultureInfo.InvariantCulture)} times while this analysis ran (it may need more memory or time than this machine gives); submit it again, or run 'nffit analyze' on the files"));
        return Query("SELECT id, status, created, started, finished, attempts, error_code, error_message, params FROM jobs WHERE status='queued' ORDER BY created, id").Select(j => j.Id).ToList();
    }

    private static string Now() => DateTimeOffset.UtcNow.ToString("yyyy-MM-dd'T'HH:mm:ss.fff'Z'", CultureInfo.InvariantCulture);

    private int Execute(string sql, params (string Name, object Value)[] values)
    {
        lock (gate)
        {
            using var c = Open();
            using var cmd = Command(c, sql, values);
            return cmd.ExecuteNonQuery();
        }
    }

    private List<Job> Query(string sql, params (string Name, object Value)[] values)
    {
        lock (gate)
        {
            using var c = Open();
            using var cmd = Command(c, sql, values);
            using var r = cmd.ExecuteReader();
            var jobs = new List<Job>();
            while (r.Read())
            {
                jobs.Add(new Job(r.GetString(0), r.GetString(1), r.GetString(2), Text(r, 3), Text(r, 4), r.GetInt32(5), Text(r, 6), Text(r, 7), r.GetString(8)));
            }

            return jobs;
        }
    }

    private static string? Text(SqliteDataReader r, int i) => r.IsDBNull(i) ? null : r.GetString(i);

    private SqliteConnection Open()
    {
        var c = new SqliteConnection(connection);
        c.Open();
        using var pragma = c.CreateCommand();
        pragma.CommandText = "PRAGMA synchronous=FULL; PRAGMA busy_timeout=30000;";
        pragma.ExecuteNonQuery();
        return c;
    }

#pragma warning disable CA2100 // Every statement is a constant of this class; values go in as parameters.
    private static SqliteCommand Command(SqliteConnection c, string sql, (string Name, object Value)[] values)
    {
        var cmd = c.CreateCommand();
        cmd.CommandText = sql;
        foreach (var (name, value) in values)
        {
            cmd.Parameters.AddWithValue(name, value);
        }

        return cmd;
    }
#pragma warning restore CA2100
}
