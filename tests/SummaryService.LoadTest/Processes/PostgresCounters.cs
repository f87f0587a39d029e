using Npgsql;

namespace SummaryService.LoadTest.Processes;

/// <summary>
/// The cluster database's running totals, read between phases: commits (<c>pg_stat_database</c>),
/// write-ahead log position (every byte the database wrote durably), rows inserted into the batch
/// log (<c>pg_stat_user_tables</c>) and the log table's size on disk with its index and TOAST.
/// </summary>
/// <param name="Commits">Transactions committed in the database.</param>
/// <param name="WalBytes">Position of the database's write-ahead log.</param>
/// <param name="LogRows">Rows ever inserted into the batch log.</param>
/// <param name="LogTableBytes">The batch log's size now (shrinks when snapshots trim it).</param>
public sealed record PostgresCounters(long Commits, long WalBytes, long LogRows, long LogTableBytes)
{
    /// <summary>
    /// Other connections report their statistics when they go idle, at the latest after 10 s in
    /// PostgreSQL 15 and later (PGSTAT_IDLE_INTERVAL in its pgstat.c, from memory): a reading waits
    /// this long after a phase so the commits of the phase are all counted.
    /// </summary>
    public static readonly TimeSpan Settle = TimeSpan.FromSeconds(11);

    private const string Query = """
        SELECT (SELECT xact_commit FROM pg_stat_database WHERE datname = current_database()),
               (pg_current_wal_lsn() - '0/0'::pg_lsn)::bigint,
               coalesce((SELECT n_tup_ins FROM pg_stat_user_tables WHERE relname = 'summary_batch_log'), 0),
               coalesce(pg_total_relation_size(to_regclass('summary_batch_log')), 0)
        """;

    /// <summary>Reads the totals now.</summary>
    public static async Task<PostgresCounters> ReadAsync(string connectionString, CancellationToken cancellationToken)
    {
        await using var connection = new NpgsqlConnection(connectionString);
        await connection.OpenAsync(cancellationToken).ConfigureAwait(false);
        await using var command = new NpgsqlCommand(Query, connection);
        await using NpgsqlDataReader reader = await command.ExecuteReaderAsync(cancellationToken).ConfigureAwait(false);
        await reader.ReadAsync(cancellationToken).ConfigureAwait(false);
        return new PostgresCounters(reader.GetInt64(0), reader.GetInt64(1), reader.GetInt64(2), reader.GetInt64(3));
    }

    /// <summary>What one phase cost the database, from the readings around it.</summary>
    public static PostgresPhase Between(PostgresCounters before, PostgresCounters after, long values, double seconds) =>
        new(after.Commits - before.Commits, seconds > 0 ? (after.Commits - before.Commits) / seconds : 0, after.LogRows - before.LogRows,
            values > 0 ? (double)(after.WalBytes - before.WalBytes) / values : 0, values > 0 ? (double)(after.LogTableBytes - before.LogTableBytes) / values : 0);
}

/// <summary>The database's share of one ingest phase.</summary>
/// <param name="Commits">Transactions committed during the phase.</param>
/// <param name="CommitsPerSecond">Commits over the phase's wall time.</param>
/// <param name="LogRows">Batch records inserted into the log.</param>
/// <param name="WalBytesPerValue">Write-ahead log bytes per value acknowledged.</param>
/// <param name="LogTableBytesPerValue">Growth of the log table per value (its true size when no snapshot trimmed it during the phase).</param>
public sealed record PostgresPhase(long Commits, double CommitsPerSecond, long LogRows, double WalBytesPerValue, double LogTableBytesPerValue);
