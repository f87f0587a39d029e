using System.Threading.Channels;
using Microsoft.Extensions.Logging;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Recording;

/// <summary>
/// The book-keeping both upload forms share: the outbox of sealed uploads, sequence numbers, the
/// counters, and the one place an upload is resolved (acknowledged, rejected or abandoned), which
/// gives its values back to the buffer and wakes anyone waiting for a flush.
/// </summary>
internal sealed class DeliveryLedger(ValueBudget budget, ILogger logger, ulong firstSequence, Action<RejectedBatchEventArgs> raiseRejected)
{
    private readonly Channel<PendingUpload> _outbox = Channel.CreateUnbounded<PendingUpload>(new UnboundedChannelOptions { SingleReader = false, SingleWriter = false });
    private TaskCompletionSource _progress = new(TaskCreationOptions.RunContinuationsAsynchronously);
    private ulong _lastSequence = firstSequence - 1;
    private long _offered;
    private long _resolved;
    private long _valuesAcknowledged;
    private long _valuesRejected;
    private long _valuesAbandoned;
    private long _batchesSent;
    private long _batchesAcknowledged;
    private long _duplicates;
    private long _batchesRejected;
    private long _reconnects;

    public ChannelReader<PendingUpload> Outbox => _outbox.Reader;

    public ILogger Logger => logger;

    public long Offered => Volatile.Read(ref _offered);

    public long ValuesAcknowledged => Volatile.Read(ref _valuesAcknowledged);

    public long ValuesRejected => Volatile.Read(ref _valuesRejected);

    public long ValuesAbandoned => Volatile.Read(ref _valuesAbandoned);

    public long BatchesSent => Volatile.Read(ref _batchesSent);

    public long BatchesAcknowledged => Volatile.Read(ref _batchesAcknowledged);

    public long Duplicates => Volatile.Read(ref _duplicates);

    public long BatchesRejected => Volatile.Read(ref _batchesRejected);

    public long Reconnects => Volatile.Read(ref _reconnects);

    /// <summary>Queues a sealed upload; after <see cref="Complete"/> it is abandoned instead.</summary>
    public void Offer(PendingUpload upload)
    {
        Interlocked.Increment(ref _offered);
        if (!_outbox.Writer.TryWrite(upload))
        {
            Abandon(upload);
        }
    }

    /// <summary>No more uploads will be offered; the sender finishes once the outbox is drained.</summary>
    public void Complete() => _outbox.Writer.TryComplete();

    /// <summary>The next sequence number; only the single sending loop calls this.</summary>
    public ulong NextSequence() => ++_lastSequence;

    public void Sent() => Interlocked.Increment(ref _batchesSent);

    public void Reconnected() => Interlocked.Increment(ref _reconnects);

    /// <summary>The server applied the upload, or had already applied it (a resend).</summary>
    public void Acknowledged(PendingUpload upload, PushReply reply)
    {
        Interlocked.Increment(ref _batchesAcknowledged);
        if (reply.Duplicate)
        {
            Interlocked.Increment(ref _duplicates);
        }

        Interlocked.Add(ref _valuesAcknowledged, upload.Values);
        Resolve(upload);
    }

    /// <summary>The server refused the upload; it is counted, logged and announced, and never sent again.</summary>
    public void Rejected(PendingUpload upload, string errorCode, string error, string errorField)
    {
        Interlocked.Increment(ref _batchesRejected);
        Interlocked.Add(ref _valuesRejected, upload.Values);
        RecorderLog.BatchRejected(logger, upload.Sequence, upload.Series.ToString(), upload.Values, errorCode, error);
        try
        {
            raiseRejected(new RejectedBatchEventArgs(upload.Series.Metric, upload.Series.Labels, upload.Sequence, upload.Values, errorCode, error, errorField));
        }
#pragma warning disable CA1031 // A subscriber's bug must not stop delivery for every other series.
        catch (Exception ex)
#pragma warning restore CA1031
        {
            RecorderLog.HandlerFailed(logger, ex);
        }

        Resolve(upload);
    }

    /// <summary>Given up unanswered (disposal timed out, or it was sealed after disposal began).</summary>
    public void Abandon(PendingUpload upload)
    {
        Interlocked.Add(ref _valuesAbandoned, upload.Values);
        Resolve(upload);
    }

    /// <summary>Abandons whatever is still queued, when the sender has stopped for good.</summary>
    public void AbandonQueued()
    {
        while (_outbox.Reader.TryRead(out PendingUpload? upload))
        {
            Abandon(upload);
        }
    }

    /// <summary>Completes once at least <paramref name="target"/> offered uploads have been resolved.</summary>
    public async Task WaitResolvedAsync(long target, CancellationToken cancellationToken)
    {
        while (true)
        {
            Task changed = Volatile.Read(ref _progress).Task;
            if (Volatile.Read(ref _resolved) >= target)
            {
                return;
            }

            await changed.WaitAsync(cancellationToken).ConfigureAwait(false);
        }
    }

    private void Resolve(PendingUpload upload)
    {
        budget.Release(upload.Values);
        Interlocked.Increment(ref _resolved);
        var next = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        Interlocked.Exchange(ref _progress, next).TrySetResult();
    }
}
