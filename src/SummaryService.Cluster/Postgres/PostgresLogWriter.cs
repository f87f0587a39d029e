using System.Threading.Channels;
using Microsoft.Extensions.Logging;
using Npgsql;
using SummaryService.Store;

namespace SummaryService.Cluster.Postgres;

/// <summary>
/// Group commit of every partition on this node into the log table: records queued while one
/// insert runs go together in the next, one statement and one commit for all of them. Each record
/// carries its activation's epoch (<see cref="PartitionEpochs"/>) and lands only while that epoch
/// is still its partition's: a record of an activation superseded elsewhere fails with
/// <see cref="PartitionFencedException"/> and is not written again. A record's
/// task completes once its commit has, or fails when the insert fails; the failed records stay
/// first in line and are written again once the database answers (a retried record that did land
/// is skipped by its key), so nothing accepted is left out of the log. Failures carry the
/// database's message, not its exception: they travel between nodes, and Orleans serializes only
/// exceptions whose every part it knows.
/// </summary>
public sealed class PostgresLogWriter : IAsyncDisposable
{
    /// <summary>Pause between attempts while the database cannot be written.</summary>
    public static readonly TimeSpan RetryInterval = TimeSpan.FromSeconds(1);

    private const int MaxRecordsPerCommit = 4096;

    private readonly NpgsqlDataSource _database;
    private readonly ILogger _logger;
    private readonly Channel<Pending> _queue = Channel.CreateUnbounded<Pending>(new UnboundedChannelOptions { SingleReader = true });
    private readonly CancellationTokenSource _stopping = new();
    private readonly Task _loop;
    private volatile string? _trouble;
    private long _commits;
    private long _records;
    private long _bytes;

    /// <summary>Starts the writer.</summary>
    public PostgresLogWriter(NpgsqlDataSource database, ILogger<PostgresLogWriter> logger)
    {
        _database = database;
        _logger = logger;
        _loop = Task.Run(WriteLoopAsync);
    }

    /// <summary>Why the log cannot be written now, or null.</summary>
    public string? Trouble => _trouble;

    /// <summary>Commits so far, records and record bytes they held: for figures of log cost.</summary>
    public (long Commits, long Records, long Bytes) Written => (Interlocked.Read(ref _commits), Interlocked.Read(ref _records), Interlocked.Read(ref _bytes));

    /// <summary>Queues one record; completes once it is committed.</summary>
    public Task Append(int partition, long epoch, ulong lsn, byte[] record)
    {
        var pending = new Pending(partition, epoch, (long)lsn, record, new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously));
        if (!_queue.Writer.TryWrite(pending))
        {
            pending.Done.SetException(new StorageUnavailableException("the batch log is closed; the node is stopping."));
        }

        return pending.Done.Task;
    }

    /// <summary>Writes what is queued, then stops.</summary>
    public async ValueTask DisposeAsync()
    {
        _queue.Writer.TryComplete();
        _stopping.CancelAfter(TimeSpan.FromSeconds(30));
        await _loop.ConfigureAwait(false);
        _stopping.Dispose();
    }

    private async Task WriteLoopAsync()
    {
        var group = new List<Pending>();
        while (group.Count > 0 || await _queue.Reader.WaitToReadAsync().ConfigureAwait(false))
        {
            while (group.Count < MaxRecordsPerCommit && _queue.Reader.TryRead(out Pending? next))
            {
                group.Add(next);
            }

            try
            {
                IReadOnlyDictionary<int, long> epochs = await InsertAsync(group, _stopping.Token).ConfigureAwait(false);
                group.RemoveAll(pending => Fenced(pending, epochs));
                Interlocked.Increment(ref _commits);
                Interlocked.Add(ref _records, group.Count);
                Interlocked.Add(ref _bytes, group.Sum(p => (long)p.Record.Length));
                _trouble = null;
                foreach (Pending done in group)
                {
                    done.Done.TrySetResult();
                }

                group.Clear();
            }
            catch (Exception ex) when (ex is NpgsqlException or TimeoutException or IOException or OperationCanceledException)
            {
                if (_stopping.IsCancellationRequested)
                {
                    Fail(group, new StorageUnavailableException($"the batch log could not be written before the node stopped: {ex.Message}"));
                    return;
                }

                _trouble = $"the batch log cannot be written to PostgreSQL: {ex.Message}";
                _logger.LogWarning("Batch log: {Records} records not committed ({Reason}); trying again in {Retry}.", group.Count, ex.Message, RetryInterval);
                Fail(group, new StorageUnavailableException(_trouble));
                await Task.Delay(RetryInterval).ConfigureAwait(false);
            }
        }
    }

    private static void Fail(List<Pending> group, Exception failure)
    {
        foreach (Pending pending in group)
        {
            pending.Done.TrySetException(failure);
        }
    }

    /// <summary>Fails a record whose activation was superseded; true when it was.</summary>
    private static bool Fenced(Pending pending, IReadOnlyDictionary<int, long> epochs)
    {
        long current = epochs.GetValueOrDefault(pending.Partition);
        if (current == pending.Epoch)
        {
            return false;
        }

        pending.Done.TrySetException(new PartitionFencedException(pending.Partition, pending.Epoch, current));
        return true;
    }

    /// <summary>
    /// Inserts the records whose epoch is their partition's current one, in one statement that holds
    /// a share lock on those partitions' epoch rows until it commits: a new activation's claim waits
    /// for it, so whatever this insert wrote is in the log the new activation reads. Returns the
    /// partitions' current epochs.
    /// </summary>
    private async Task<IReadOnlyDictionary<int, long>> InsertAsync(List<Pending> group, CancellationToken cancellationToken)
    {
        await using NpgsqlCommand command = _database.CreateCommand(
            """
            WITH owner AS (
                SELECT partition, epoch FROM summary_partition_owner WHERE partition = ANY(@partitions) FOR SHARE),
            written AS (
                INSERT INTO summary_batch_log (partition, lsn, epoch, record)
                SELECT r.partition, r.lsn, r.epoch, r.record
                FROM unnest(@partitions, @lsns, @epochs, @records) AS r(partition, lsn, epoch, record)
                JOIN owner ON owner.partition = r.partition AND owner.epoch = r.epoch
                ON CONFLICT DO NOTHING)
            SELECT partition, epoch FROM owner
            """);
        command.Parameters.AddWithValue("partitions", group.Select(p => p.Partition).ToArray());
        command.Parameters.AddWithValue("lsns", group.Select(p => p.Lsn).ToArray());
        command.Parameters.AddWithValue("epochs", group.Select(p => p.Epoch).ToArray());
        command.Parameters.AddWithValue("records", group.Select(p => p.Record).ToArray());
        var epochs = new Dictionary<int, long>();
        await using NpgsqlDataReader reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        while (await reader.ReadAsync(cancellationToken).ConfigureAwait(false))
        {
            epochs[reader.GetInt32(0)] = reader.GetInt64(1);
        }

        return epochs;
    }

    private sealed record Pending(int Partition, long Epoch, long Lsn, byte[] Record, TaskCompletionSource Done);
}
