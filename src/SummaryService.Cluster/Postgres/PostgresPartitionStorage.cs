using Microsoft.Extensions.Logging;
using Npgsql;
using SummaryService.Cluster.Partitions;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Postgres;

/// <summary>Every partition's log and snapshots in one PostgreSQL database, its log records committed together by the node's writer.</summary>
public sealed class PostgresPartitionStorage(NpgsqlDataSource database, PostgresLogWriter writer, ILogger<PostgresPartitionStorage> logger) : IPartitionStorage
{
    /// <inheritdoc/>
    public (IBatchLog Log, ISnapshotStore Snapshots) Open(int partition) =>
        (new PostgresBatchLog(partition, database, writer, logger), new PostgresSnapshotStore(partition, database));
}
