using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Partitions;

/// <summary>
/// What every partition's store is opened with. The cluster-wide limits (series, series per tenant,
/// memory) are shared out evenly: each partition holds its share, so the cluster holds about the
/// configured total (the key hash spreads series evenly; a partition may refuse a little early when
/// its share fills before the others').
/// </summary>
public sealed record PartitionSetup
{
    /// <summary>Derives each partition's settings from the whole cluster's.</summary>
    /// <param name="cluster">Tiers, sketch settings and cluster-wide limits.</param>
    /// <param name="persistence">Durability and snapshot settings (the data directory is unused: storage is <see cref="IPartitionStorage"/>).</param>
    /// <param name="rollupInterval">How often each partition rolls aged buckets.</param>
    /// <param name="partitions">Number of partitions.</param>
    public PartitionSetup(StoreOptions cluster, PersistenceOptions persistence, TimeSpan rollupInterval, int partitions)
    {
        ArgumentNullException.ThrowIfNull(cluster);
        ArgumentNullException.ThrowIfNull(persistence);
        Store = cluster with
        {
            MaxSeries = Share(cluster.MaxSeries, partitions),
            MaxSeriesPerTenant = Share(cluster.MaxSeriesPerTenant, partitions),
            MemoryBudgetBytes = Math.Max(1, cluster.MemoryBudgetBytes / partitions),
        };
        // Segment files live on one node's disk, where a partition that moves to another node after
        // a failure could not read them: partitions keep aged buckets in memory (in their PostgreSQL
        // snapshots) until segments have a shared medium.
        Persistence = persistence with { Segments = null };
        RollupInterval = rollupInterval;
    }

    /// <summary>Each partition's store settings.</summary>
    public StoreOptions Store { get; }

    /// <summary>Durability and snapshot interval; never segment files (see the constructor).</summary>
    public PersistenceOptions Persistence { get; }

    /// <summary>How often each partition rolls aged buckets.</summary>
    public TimeSpan RollupInterval { get; }

    private static int Share(int total, int partitions) => (int)Math.Max(1, (total + (long)partitions - 1) / partitions);
}
