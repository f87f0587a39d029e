using Microsoft.Extensions.Logging;
using Npgsql;
using SummaryService.Cluster.Partitions;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Postgres;

/// <summary>
/// Every partition's log and snapshots in one PostgreSQL database, its log records committed
/// together by the node's writer. Opening a partition claims its next epoch before anything is read,
/// which fences every earlier activation's writes out (<see cref="PartitionEpochs"/>).
/// </summary>
public sealed class PostgresPartitionStorage(NpgsqlDataSource database, PostgresLogWriter writer, ILogger<PostgresPartitionStorage> logger) : IPartitionStorage
{
    /// <inheritdoc/>
    public (IBatchLog Log, ISnapshotStore Snapshots) Open(int partition)
    {
        long epoch = PartitionEpochs.Claim(database, partition);
        return (new PostgresBatchLog(partition, epoch, database, writer, logger), new PostgresSnapshotStore(partition, epoch, database));
    }
}
