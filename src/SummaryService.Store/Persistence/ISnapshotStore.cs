namespace SummaryService.Store.Persistence;

/// <summary>
/// Where snapshot generations are kept: listed newest first, read back whole (or salvaged in part),
/// written shard by shard, pruned. The store knows only this interface; today's medium is
/// directories of checksummed files (<see cref="FileSnapshotStore"/>).
/// </summary>
public interface ISnapshotStore
{
    /// <summary>Generations kept, newest first.</summary>
    IReadOnlyList<ulong> Generations();

    /// <summary>
    /// Reads a whole generation, or explains in <paramref name="problem"/> why it cannot be used. With
    /// <paramref name="salvage"/> it returns what can still be read of a damaged one, each loss in
    /// <paramref name="report"/>'s warnings.
    /// </summary>
    bool TryRead(ulong generation, bool salvage, RecoveryReport report, out SnapshotImage? image, out string? problem);

    /// <summary>Starts writing generation <paramref name="generation"/>; nothing of it is visible until <see cref="ISnapshotWriter.Complete"/>.</summary>
    ISnapshotWriter Begin(ulong generation);

    /// <summary>Keeps the newest <paramref name="keep"/> generations and removes the rest.</summary>
    void Prune(int keep);
}

/// <summary>One generation being written. Disposing it before <see cref="Complete"/> abandons it.</summary>
public interface ISnapshotWriter : IDisposable
{
    /// <summary>
    /// Takes one series of the shard being exported. Called under the store's lock of that shard:
    /// it must copy or encode the buckets at once and keep no reference to their sketches.
    /// </summary>
    void AddSeries(SeriesKey key, IReadOnlyList<StoredBucket> buckets);

    /// <summary>Writes the series taken since the last shard as shard <paramref name="shard"/>'s part, off the store's locks.</summary>
    Task EndShardAsync(ShardMark shard);

    /// <summary>Makes the generation visible as a whole; returns the bytes it takes.</summary>
    long Complete(SnapshotMark mark);
}
