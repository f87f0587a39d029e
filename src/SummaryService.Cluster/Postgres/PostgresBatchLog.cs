using Google.Protobuf;
using Microsoft.Extensions.Logging;
using Npgsql;
using SummaryService.Formats.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Postgres;

/// <summary>
/// One partition's batch log: rows of <c>summary_batch_log</c> keyed by (partition, lsn), each a
/// log record as the file log frames it. Appends go through the node's <see cref="PostgresLogWriter"/>,
/// which commits every partition's records together. Writes carry the activation's
/// <paramref name="epoch"/> and are fenced by it (<see cref="PartitionEpochs"/>).
/// </summary>
public sealed class PostgresBatchLog(int partition, long epoch, NpgsqlDataSource database, PostgresLogWriter writer, ILogger logger) : IBatchLog
{
    private readonly object _gate = new();
    private Task _last = Task.CompletedTask;
    private bool _started;

    /// <inheritdoc/>
    public string? Trouble => _started ? writer.Trouble : null;

    /// <inheritdoc/>
    public IEnumerable<LoggedWrite> ReadAll(RecoveryReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        var writes = new List<LoggedWrite>();
        using NpgsqlCommand command = database.CreateCommand("SELECT lsn, record FROM summary_batch_log WHERE partition = @partition ORDER BY lsn");
        command.Parameters.AddWithValue("partition", partition);
        using NpgsqlDataReader reader = command.ExecuteReader();
        while (reader.Read())
        {
            long lsn = reader.GetInt64(0);
            byte[] bytes = reader.GetFieldValue<byte[]>(1);
            report.LogRecordsRead++;
            LogRecord record;
            try
            {
                record = LogRecord.Parser.ParseFrom(bytes);
            }
            catch (InvalidProtocolBufferException ex)
            {
                report.SkipRecord((ulong)lsn, "(unreadable)", ex.Message, logger);
                continue;
            }

            // A record from a newer server is not damage: skipping it would lose an acknowledged batch.
            if (record.FormatVersion > StoreRecordCodec.LogFormatVersion)
            {
                throw new InvalidDataException($"Partition {partition}'s batch log holds a record of format version {record.FormatVersion} (lsn {lsn}); this server reads versions up to {StoreRecordCodec.LogFormatVersion}. Run the newer server.");
            }

            if (StoreRecordCodec.ReplayableWrite(record, report, logger) is { } write)
            {
                writes.Add(write);
            }
        }

        return writes;
    }

    /// <inheritdoc/>
    public void Start(ulong firstLsn)
    {
        if (_started)
        {
            throw new InvalidOperationException("the batch log was started already.");
        }

        _started = true;
    }

    /// <inheritdoc/>
    public Task Append(LoggedWrite write)
    {
        if (!_started)
        {
            throw new InvalidOperationException("the batch log is not started; nothing can be appended before Start.");
        }

        Task committed = writer.Append(partition, epoch, write.Lsn, StoreRecordCodec.ToRecord(write).ToByteArray());
        lock (_gate)
        {
            _last = committed;
        }

        return committed;
    }

    /// <summary>The writer commits in queue order, so the last record's commit covers every earlier one.</summary>
    public Task Barrier()
    {
        if (Trouble is { } trouble)
        {
            return Task.FromException(new Store.StorageUnavailableException(trouble));
        }

        lock (_gate)
        {
            return _last;
        }
    }

    /// <inheritdoc/>
    public Task RotateAsync(ulong nextLsn) => Barrier();

    /// <inheritdoc/>
    public void DeleteBefore(ulong keepFrom)
    {
        // A superseded activation trims nothing: the records may be what the current one replays.
        using NpgsqlCommand command = database.CreateCommand(PartitionEpochs.Owner + "DELETE FROM summary_batch_log WHERE partition = @partition AND lsn < @keep AND EXISTS (SELECT FROM owner)");
        command.Parameters.AddWithValue("partition", partition);
        command.Parameters.AddWithValue("epoch", epoch);
        command.Parameters.AddWithValue("keep", (long)keepFrom);
        command.ExecuteNonQuery();
    }

    /// <summary>Waits for this partition's last record; the writer itself belongs to the node.</summary>
    public async ValueTask DisposeAsync()
    {
        Task last;
        lock (_gate)
        {
            last = _last;
        }

        try
        {
            await last.ConfigureAwait(false);
        }
        catch (Store.StorageUnavailableException ex)
        {
            logger.LogWarning("Partition {Partition}: the last batch log record was not committed at close: {Reason}", partition, ex.Message);
        }
    }
}
