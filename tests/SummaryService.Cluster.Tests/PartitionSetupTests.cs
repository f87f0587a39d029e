using SummaryService.Cluster.Partitions;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Tests;

/// <summary>What each partition's store is opened with, derived from the whole cluster's settings.</summary>
public sealed class PartitionSetupTests
{
    [Fact]
    public void Partitions_share_the_cluster_wide_limits_out_evenly()
    {
        var setup = new PartitionSetup(new StoreOptions { MaxSeries = 1_000, MaxSeriesPerTenant = 100, MemoryBudgetBytes = 64_000 }, new PersistenceOptions(), TimeSpan.FromMinutes(1), 64);
        Assert.Equal(16, setup.Store.MaxSeries); // ceil(1000 / 64)
        Assert.Equal(2, setup.Store.MaxSeriesPerTenant); // ceil(100 / 64)
        Assert.Equal(1_000, setup.Store.MemoryBudgetBytes);
    }

    [Fact]
    public void Partitions_never_keep_aged_buckets_in_one_nodes_segment_files()
    {
        // A partition reactivated on another node after a failure could not read them.
        var setup = new PartitionSetup(new StoreOptions(), new PersistenceOptions(), TimeSpan.FromMinutes(1), 64);
        Assert.NotNull(new PersistenceOptions().Segments);
        Assert.Null(setup.Persistence.Segments);
    }
}
