using Npgsql;

namespace SummaryService.Cluster.Postgres;

/// <summary>
/// Fencing of partition activations. Orleans keeps one activation of a partition, but during a
/// network split or a slow death a node may still run one that the cluster has already moved: two
/// activations would then write the same log, each unaware of the other's records. So each
/// activation claims the next epoch of its partition in <c>summary_partition_owner</c> before it
/// reads the partition back, and every write of the partition (log records, snapshot rows, log
/// trimming) lands only while its epoch is still the current one. The older activation's writes
/// then fail with <see cref="PartitionFencedException"/> and change nothing.
/// </summary>
public static class PartitionEpochs
{
    /// <summary>Claims the partition for a new activation; its epoch, higher than every earlier one.</summary>
    public static long Claim(NpgsqlDataSource database, int partition)
    {
        ArgumentNullException.ThrowIfNull(database);
        using NpgsqlCommand command = database.CreateCommand(
            """
            INSERT INTO summary_partition_owner (partition, epoch) VALUES (@partition, 1)
            ON CONFLICT (partition) DO UPDATE SET epoch = summary_partition_owner.epoch + 1
            RETURNING epoch
            """);
        command.Parameters.AddWithValue("partition", partition);
        return (long)command.ExecuteScalar()!;
    }

    /// <summary>The error for a fenced write: the partition's current epoch read back for the message.</summary>
    public static PartitionFencedException Fenced(NpgsqlDataSource database, int partition, long epoch)
    {
        ArgumentNullException.ThrowIfNull(database);
        using NpgsqlCommand command = database.CreateCommand("SELECT coalesce(max(epoch), 0) FROM summary_partition_owner WHERE partition = @partition");
        command.Parameters.AddWithValue("partition", partition);
        return new PartitionFencedException(partition, epoch, (long)command.ExecuteScalar()!);
    }

    /// <summary>
    /// A common table expression, <c>owner</c>, holding one row while the epoch is current (and a
    /// share lock on it until the statement's transaction ends, so no claim passes in between):
    /// a fenced statement writes only <c>WHERE EXISTS (SELECT FROM owner)</c>. Parameters
    /// <c>@partition</c> and <c>@epoch</c>.
    /// </summary>
    public const string Owner = "WITH owner AS (SELECT FROM summary_partition_owner WHERE partition = @partition AND epoch = @epoch FOR SHARE) ";
}
