using System.Threading.Channels;

namespace NormalFormFit.Cli.Service;

/// <summary>
/// The bounded queue of jobs that wait for a worker (a <see cref="Channel"/>) and the workers that run them.
/// An upload takes a place in the queue before its body is read (<see cref="TryReserve"/>), so a full queue is
/// answered at once with 503; the place is given back when a worker takes the job or the upload fails.
/// </summary>
internal sealed class JobQueue : IDisposable
{
    private readonly Channel<(string Id, bool HoldsPlace)> waiting = Channel.CreateUnbounded<(string, bool)>();
    private readonly SemaphoreSlim places;
    private readonly JobStore store;
    private readonly ServiceSettings settings;
    private readonly CancellationTokenSource stop = new();
    private readonly List<Task> workers = [];

    public JobQueue(JobStore store, ServiceSettings settings)
    {
        this.store = store;
        this.settings = settings;
        places = new SemaphoreSlim(settings.Queue, settings.Queue);
    }

    /// <summary>Takes a place in the queue for an upload; false when the queue is full.</summary>
    public bool TryReserve() => places.Wait(0);

    /// <summary>Gives back a place taken by an upload that did not become a job.</summary>
    public void Release() => places.Release();

    /// <summary>Queues a stored job; <paramref name="holdsPlace"/> when it took a place with <see cref="TryReserve"/>.</summary>
    public void Enqueue(string id, bool holdsPlace) => waiting.Writer.TryWrite((id, holdsPlace));

    /// <summary>Queues what a dead process left (<see cref="JobStore.Recover"/>): jobs that waited and jobs it was running.</summary>
    public void Recover()
    {
        foreach (var id in store.Recover())
        {
            // Jobs from before the restart take a place while there is one; past that they still run (none is lost).
            Enqueue(id, TryReserve());
        }
    }

    /// <summary>Starts <paramref name="count"/> workers.</summary>
    public void StartWorkers(int count)
    {
        for (var i = 0; i < count; i++)
        {
            workers.Add(Task.Run(() => Work(stop.Token)));
        }
    }

    /// <summary>Stops taking jobs and waits for the running ones (a job cut short is run again after a restart).</summary>
    public async Task StopAsync(CancellationToken cancellationToken)
    {
        await stop.CancelAsync().ConfigureAwait(false);
        waiting.Writer.TryComplete();
        await Task.WhenAll(workers).WaitAsync(cancellationToken).ConfigureAwait(false);
    }

    public void Dispose()
    {
        stop.Dispose();
        places.Dispose();
    }

    private async Task Work(CancellationToken token)
    {
        try
        {
            while (await waiting.Reader.WaitToReadAsync(token).ConfigureAwait(false))
            {
                if (!waiting.Reader.TryRead(out var item))
                {
                    continue;
                }

                if (item.HoldsPlace)
                {
                    places.Release();
                }

                if (store.Start(item.Id))
                {
                    JobRun.Run(store, settings, item.Id);
                }
            }
        }
        catch (OperationCanceledException)
        {
            // Stopping.
        }
    }
}
