using Npgsql;

namespace SummaryService.Cluster.Postgres;

/// <summary>
/// The cluster's tables, created or brought up to date when a node starts. Each step runs once, in
/// order, recorded in <c>summary_schema_version</c>; nodes starting together take turns under a
/// transaction-scoped advisory lock, so a step never runs twice.
/// </summary>
public static class PostgresSchema
{
    /// <summary>The schema version this server writes and reads.</summary>
    public static int Version => Steps.Length;

    // Append only: a released step is never edited, a change is a new step.
    private static readonly string[] Steps =
    [
        """
        CREATE TABLE summary_batch_log (
            partition integer NOT NULL,
            lsn bigint NOT NULL,
            record bytea NOT NULL,
            PRIMARY KEY (partition, lsn));
        CREATE TABLE summary_snapshot (
            partition integer NOT NULL,
            generation bigint NOT NULL,
            manifest bytea NOT NULL,
            PRIMARY KEY (partition, generation));
        CREATE TABLE summary_snapshot_shard (
            partition integer NOT NULL,
            generation bigint NOT NULL,
            shard integer NOT NULL,
            header bytea NOT NULL,
            series bytea[] NOT NULL,
            PRIMARY KEY (partition, generation, shard));
        """,
        """
        CREATE TABLE summary_partition_owner (
            partition integer PRIMARY KEY,
            epoch bigint NOT NULL);
        ALTER TABLE summary_batch_log ADD COLUMN epoch bigint NOT NULL DEFAULT 0;
        """,
    ];

    // An arbitrary constant naming this schema's migration lock among the database's advisory locks.
    private const long MigrationLock = 0x53756d6d617279;

    /// <summary>Applies the missing steps; refuses a database already migrated by a newer server.</summary>
    public static async Task MigrateAsync(NpgsqlDataSource database, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(database);
        await using NpgsqlConnection connection = await database.OpenConnectionAsync(cancellationToken).ConfigureAwait(false);
        await using NpgsqlTransaction transaction = await connection.BeginTransactionAsync(cancellationToken).ConfigureAwait(false);
        await ExecuteAsync(connection, transaction, $"SELECT pg_advisory_xact_lock({MigrationLock})", cancellationToken).ConfigureAwait(false);
        await ExecuteAsync(connection, transaction, "CREATE TABLE IF NOT EXISTS summary_schema_version (version integer NOT NULL)", cancellationToken).ConfigureAwait(false);
        await using var read = new NpgsqlCommand("SELECT coalesce(max(version), 0) FROM summary_schema_version", connection, transaction);
        int current = Convert.ToInt32(await read.ExecuteScalarAsync(cancellationToken).ConfigureAwait(false), System.Globalization.CultureInfo.InvariantCulture);
        if (current > Version)
        {
            throw new InvalidOperationException($"The database's summary schema is version {current}; this server knows versions up to {Version}. Run the newer server.");
        }

        for (int step = current; step < Version; step++)
        {
            await ExecuteAsync(connection, transaction, Steps[step], cancellationToken).ConfigureAwait(false);
            await ExecuteAsync(connection, transaction, $"INSERT INTO summary_schema_version (version) VALUES ({step + 1})", cancellationToken).ConfigureAwait(false);
        }

        await transaction.CommitAsync(cancellationToken).ConfigureAwait(false);
    }

    private static async Task ExecuteAsync(NpgsqlConnection connection, NpgsqlTransaction transaction, string sql, CancellationToken cancellationToken)
    {
        await using var command = new NpgsqlCommand(sql, connection, transaction);
        await command.ExecuteNonQueryAsync(cancellationToken).ConfigureAwait(false);
    }
}
