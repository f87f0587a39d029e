namespace SummaryService.Cluster.Partitions;

/// <summary>
/// This node's writes to one partition, sent one call at a time in arrival order; the writes that
/// arrive while a call is out go together in the next. Orleans does not keep the order of separate
/// calls, and a partition keeps only each producer's highest sequence: a stream's later batch that
/// overtook an earlier one would make the earlier one look like a repeat and drop it. One call in
/// flight per partition keeps the order, and carrying everything that queued meanwhile keeps the
/// partition's log committing many writes at once.
/// </summary>
/// <remarks>
/// When a call fails, the writes queued behind it fail too, unsent: none of them may be applied
/// ahead of a failed one that its producer will send again.
/// </remarks>
internal sealed class PartitionWriteQueue(PartitionFanOut partitions, int partition)
{
    private readonly object _gate = new();
    private List<Waiting> _waiting = [];
    private bool _sending;

    /// <summary>Queues the write; completes with its outcome, or fails as the call carrying it failed.</summary>
    public Task<PartitionWritten> SendAsync(PartitionWrite write, CancellationToken cancellationToken)
    {
        var waiting = new Waiting(write, new TaskCompletionSource<PartitionWritten>(TaskCreationOptions.RunContinuationsAsynchronously));
        bool start;
        lock (_gate)
        {
            _waiting.Add(waiting);
            start = !_sending;
            _sending = true;
        }

        if (start)
        {
            _ = Task.Run(SendQueuedAsync, CancellationToken.None);
        }

        // A caller that stops waiting does not unsend its write: it may still be applied.
        return waiting.Done.Task.WaitAsync(cancellationToken);
    }

    private async Task SendQueuedAsync()
    {
        while (Next() is { } group)
        {
            try
            {
                PartitionWrite[] writes = [.. group.Select(w => w.Write)];
                PartitionWritten[] written = await partitions.CallAsync(partition, g => g.Write(writes), CancellationToken.None).ConfigureAwait(false);
                for (int i = 0; i < group.Count; i++)
                {
                    group[i].Done.TrySetResult(written[i]);
                }
            }
            catch (Exception failure)
            {
                List<Waiting> behind;
                lock (_gate)
                {
                    behind = _waiting;
                    _waiting = [];
                }

                foreach (Waiting failed in group.Concat(behind))
                {
                    failed.Done.TrySetException(failure);
                }
            }
        }
    }

    /// <summary>Everything queued, or null (and no longer sending) when nothing is.</summary>
    private List<Waiting>? Next()
    {
        lock (_gate)
        {
            if (_waiting.Count == 0)
            {
                _sending = false;
                return null;
            }

            List<Waiting> group = _waiting;
            _waiting = [];
            return group;
        }
    }

    private sealed record Waiting(PartitionWrite Write, TaskCompletionSource<PartitionWritten> Done);
}
