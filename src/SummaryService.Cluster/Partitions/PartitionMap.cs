using SummaryService.Store;

namespace SummaryService.Cluster.Partitions;

/// <summary>
/// Which partition owns a series: the store's stable key hash (XXH64 of the canonical key), its
/// upper 32 bits modulo the partition count. The upper bits keep partitions independent of the
/// shard a partition's own store picks from the lower bits, so series spread over both.
/// </summary>
public sealed class PartitionMap(int partitions)
{
    /// <summary>Number of partitions.</summary>
    public int Count { get; } = partitions > 0 ? partitions : throw new ArgumentOutOfRangeException(nameof(partitions), partitions, "at least one partition");

    /// <summary>The partition of a series.</summary>
    public int Of(SeriesKey key)
    {
        ArgumentNullException.ThrowIfNull(key);
        return (int)((key.Hash >> 32) % (ulong)Count);
    }
}
