namespace SummaryService.Cluster.Partitions;

/// <summary>
/// One partition of the cluster's series, keyed by its number. It owns the series whose key hashes
/// to it (<see cref="PartitionMap"/>) and answers for them through the same store the single-node
/// server runs; Orleans keeps one activation of it somewhere in the cluster and moves it when its node dies.
/// </summary>
[Alias("summary.partition")]
public interface IPartitionGrain : IGrainWithIntegerKey
{
    /// <summary>
    /// Applies the writes in their order, each answered once it is in the partition's log. One
    /// call carries several writes so that their order survives the trip (see <see cref="PartitionWriteQueue"/>).
    /// </summary>
    [Alias("write")]
    Task<PartitionWritten[]> Write(PartitionWrite[] writes);

    /// <summary>The partition's selected series merged per group, for the window or each of its steps.</summary>
    [Alias("read")]
    Task<PartitionAnswer> Read(PartitionRead read);

    /// <summary>The partition's series of a metric (of every metric when null).</summary>
    [Alias("list")]
    Task<PartitionSeries[]> List(string? metric);

    /// <summary>Removes one series; null when the partition did not hold it.</summary>
    [Alias("remove")]
    Task<PartitionSeries?> Remove(string metric, Dictionary<string, string> labels);

    /// <summary>The partition's figures.</summary>
    [Alias("figures")]
    Task<PartitionFigures> Figures();

    /// <summary>Rolls aged buckets now.</summary>
    [Alias("roll")]
    Task Roll();

    /// <summary>Writes a snapshot now; null when the partition keeps none.</summary>
    [Alias("snapshot")]
    Task<PartitionSnapshot?> Snapshot();
}
