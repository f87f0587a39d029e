namespace SummaryService.Cluster.Postgres;

/// <summary>A write of a partition activation that another activation has since superseded (see <see cref="PartitionEpochs"/>).</summary>
public sealed class PartitionFencedException(int partition, long epoch, long current)
    : Exception($"partition {partition} was activated again elsewhere (epoch {current}); this activation (epoch {epoch}) may no longer write it, and its write was not kept.")
{
    /// <summary>The partition.</summary>
    public int Partition { get; } = partition;
}
