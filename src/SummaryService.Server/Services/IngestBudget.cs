using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;

namespace SummaryService.Server.Services;

/// <summary>
/// Bytes of batches the server holds between reading them and answering them (while they are
/// applied and wait for the log), across every caller. Each stream already holds at most a few
/// dozen batches, but many streams and many unary calls together would otherwise be bounded only
/// by how many connections arrive. Past <c>Server:MaxIngestBytesHeld</c> a unary push is refused
/// with ResourceExhausted and a stream stops reading (HTTP/2 flow control then slows its sender).
/// </summary>
public sealed class IngestBudget(IOptions<ServerSettings> settings)
{
    private long _held;
    private int _waiting;
    private TaskCompletionSource _freed = new(TaskCreationOptions.RunContinuationsAsynchronously);

    /// <summary>Bytes held now.</summary>
    public long Held => Interlocked.Read(ref _held);

    /// <summary>The limit in force.</summary>
    public long Limit => settings.Value.MaxIngestBytesHeld;

    /// <summary>Takes room for <paramref name="bytes"/>; false when the budget is spent. A batch alone always fits, so only the message size limit bounds one batch.</summary>
    public bool TryTake(long bytes)
    {
        long after = Interlocked.Add(ref _held, bytes);
        if (after > Limit && after != bytes)
        {
            Give(bytes);
            return false;
        }

        return true;
    }

    /// <summary>Takes room for <paramref name="bytes"/>, waiting for batches held by others to be answered.</summary>
    public async ValueTask TakeAsync(long bytes, CancellationToken cancellationToken)
    {
        while (!TryTake(bytes))
        {
            Interlocked.Increment(ref _waiting);
            try
            {
                Task freed = Volatile.Read(ref _freed).Task;
                if (TryTake(bytes))
                {
                    return;
                }

                await freed.WaitAsync(cancellationToken).ConfigureAwait(false);
            }
            finally
            {
                Interlocked.Decrement(ref _waiting);
            }
        }
    }

    /// <summary>Gives back the room of an answered batch, waking any stream waiting for room.</summary>
    public void Give(long bytes)
    {
        Interlocked.Add(ref _held, -bytes);
        if (Volatile.Read(ref _waiting) > 0)
        {
            Interlocked.Exchange(ref _freed, new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously)).TrySetResult();
        }
    }
}
