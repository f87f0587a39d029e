using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>
/// The one seam between the server and a store of time-bucketed series sketches. The single-node
/// implementation is <see cref="ShardedSeriesStore"/> (kept on disk by <see cref="PersistentSeriesStore"/>);
/// a distributed back end implements the same calls. Reads return merged sketches per group, not
/// finished summaries: summaries are built above the store (<see cref="StoreSummaries"/>), so every
/// back end answers the same figures from the same sketches. Upkeep lives behind
/// <see cref="IStoreMaintenance"/>, producer de-duplication behind <see cref="IProducerLedger"/>.
/// </summary>
public interface ISeriesStore
{
    /// <summary>
    /// Validates and applies one batch completely, or throws <see cref="StoreRejectedException"/> and
    /// changes nothing. Completes once the batch is as durable as the store's durability mode promises.
    /// </summary>
    ValueTask<AppendResult> AppendAsync(SeriesBatch batch, CancellationToken cancellationToken = default);

    /// <summary>
    /// Validates an uploaded sketch and merges it into the bucket of its timestamp completely, or throws
    /// <see cref="StoreRejectedException"/> and changes nothing. Durable like <see cref="AppendAsync"/>.
    /// </summary>
    ValueTask<AppendResult> MergeSketchAsync(UploadedSketch upload, CancellationToken cancellationToken = default);

    /// <summary>The selected series over the window merged into one sketch per combination of the group-by labels' values.</summary>
    /// <exception cref="StoreRejectedException">The window is empty.</exception>
    ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default);

    /// <summary>
    /// <see cref="ReadAsync(SeriesSelector, TimeWindow, IReadOnlyList{string}, CancellationToken)"/>,
    /// but with <paramref name="acceptPartial"/> a store whose parts can fail on their own (a
    /// cluster's partitions) answers from the parts that answered and names the others in
    /// <see cref="WindowSketches.Partial"/>. A store in one process has no such parts and always answers whole.
    /// </summary>
    ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, bool acceptPartial, CancellationToken cancellationToken) =>
        ReadAsync(selector, window, groupBy, cancellationToken);

    /// <summary>
    /// One answer per step of the window, oldest first: step i is [from + i·step, min(from + (i+1)·step, to)).
    /// Each answer is what <see cref="ReadAsync(SeriesSelector, TimeWindow, IReadOnlyList{string}, CancellationToken)"/> of that step alone gives; one call lets the store
    /// find the series once per call rather than once per step.
    /// </summary>
    /// <exception cref="StoreRejectedException">The window is empty, the step is under 1 ms, or it makes more steps than the store answers per call.</exception>
    ValueTask<IReadOnlyList<WindowSketches>> ReadStepsAsync(SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default);

    /// <summary>The steps as <see cref="ReadStepsAsync(SeriesSelector, TimeWindow, long, IReadOnlyList{string}, CancellationToken)"/>, partial answers accepted as by <see cref="ReadAsync(SeriesSelector, TimeWindow, IReadOnlyList{string}, bool, CancellationToken)"/>.</summary>
    ValueTask<IReadOnlyList<WindowSketches>> ReadStepsAsync(SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, bool acceptPartial, CancellationToken cancellationToken) =>
        ReadStepsAsync(selector, window, stepMs, groupBy, cancellationToken);

    /// <summary>Series of a metric (or of every metric when null), with their extent.</summary>
    ValueTask<IReadOnlyList<SeriesInfo>> ListSeriesAsync(string? metric = null, CancellationToken cancellationToken = default);

    /// <summary>Removes one series and all its buckets in one step; returns what was removed, or null when it did not exist.</summary>
    ValueTask<SeriesInfo?> RemoveAsync(SeriesKey key, CancellationToken cancellationToken = default);

    /// <summary>Counts and estimated memory, in total, per tier and per partition of the store.</summary>
    ValueTask<StoreStats> GetStatsAsync(CancellationToken cancellationToken = default);
}

/// <summary>Outcome of an accepted batch.</summary>
/// <param name="Accepted">Values applied (0 for a duplicate).</param>
/// <param name="Duplicate">True when this (producer, sequence) was applied before and was not applied again.</param>
public readonly record struct AppendResult(long Accepted, bool Duplicate);

/// <summary>A window read's answer.</summary>
/// <param name="Groups">One entry per group, ordered by their label values.</param>
/// <param name="Covered">Span of the buckets actually merged (bucket-aligned; may reach beyond the window), or the window itself when no bucket overlapped.</param>
public sealed record WindowSketches(IReadOnlyList<GroupSketch> Groups, TimeWindow Covered)
{
    /// <summary>Null for a whole answer; for a partial one (accepted by the caller), the parts left out.</summary>
    public PartialRead? Partial { get; init; }
}

/// <summary>The parts of a store a partial read left out because they did not answer in time.</summary>
/// <param name="Parts">Parts the store has (a cluster's partitions).</param>
/// <param name="Missing">The parts left out, ascending.</param>
public sealed record PartialRead(int Parts, IReadOnlyList<int> Missing)
{
    /// <summary>Share of the parts in the answer.</summary>
    public double Share => (Parts - Missing.Count) / (double)Parts;
}

/// <summary>One group of a window read.</summary>
/// <param name="Labels">The group-by labels and their values (empty string where a series lacks the label).</param>
/// <param name="Sketch">The group's series merged over the window; a fresh sketch the caller owns.</param>
/// <param name="SeriesMerged">How many series were merged into this group.</param>
public sealed record GroupSketch(IReadOnlyDictionary<string, string> Labels, SeriesSketch Sketch, int SeriesMerged);

/// <summary>A series in the catalogue.</summary>
public sealed record SeriesInfo(SeriesKey Key, long Count, TimeWindow Extent, int Buckets);

/// <summary>Store figures.</summary>
/// <param name="Series">Series held.</param>
/// <param name="Buckets">Buckets held, all tiers.</param>
/// <param name="EstimatedBytes">Estimated sketch bytes, all tiers.</param>
/// <param name="Tiers">Figures per tier.</param>
/// <param name="Partitions">Figures per partition of the store (a shard of the local store, a partition of a cluster).</param>
/// <param name="ProducerMarks">Producers whose highest applied sequence is remembered (see <see cref="StoreOptions.ProducerMarkRetention"/>).</param>
public sealed record StoreStats(int Series, long Buckets, long EstimatedBytes, IReadOnlyList<TierStats> Tiers, IReadOnlyList<PartitionStats> Partitions, int ProducerMarks);

/// <summary>Figures of one tier across all series.</summary>
public sealed record TierStats(TimeSpan BucketWidth, long Buckets, long EstimatedBytes);

/// <summary>Figures of one partition of the store.</summary>
public sealed record PartitionStats(int Partition, int Series, long Buckets, long EstimatedBytes)
{
    /// <summary>The cluster node holding the partition; null in one process.</summary>
    public string? Node { get; init; }
}
