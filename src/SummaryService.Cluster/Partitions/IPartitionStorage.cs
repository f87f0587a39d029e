using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Partitions;

/// <summary>
/// Where a partition keeps its batch log and snapshots. Every node reaches the same storage, so a
/// partition activated on any node reads back what its previous activation acknowledged.
/// </summary>
public interface IPartitionStorage
{
    /// <summary>The log and snapshot store of one partition; the partition's store owns both from then on.</summary>
    (IBatchLog Log, ISnapshotStore Snapshots) Open(int partition);
}
