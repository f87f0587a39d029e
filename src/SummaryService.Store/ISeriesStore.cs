using SummaryService.Sketches.Summaries;

namespace SummaryService.Store;

/// <summary>
/// What the server needs from a store of time-bucketed series sketches. The local implementation
/// is <see cref="ShardedSeriesStore"/>; a distributed back end can take its place.
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
    ValueTask<AppendResult> MergeSketchAsync(SketchUpload upload, CancellationToken cancellationToken = default);

    /// <summary>Summary of the selected series over the window, one per combination of the group-by labels' values.</summary>
    WindowSummary Summarize(Selector selector, TimeRange window, IReadOnlyList<string> groupBy, SummaryOptions options);

    /// <summary>
    /// One summary per step of the window, oldest first: step i is [from + i·step, min(from + (i+1)·step, to)).
    /// Each answer is what <see cref="Summarize"/> of that step alone gives; one call lets the store
    /// find the series and take their locks once per call rather than once per step.
    /// </summary>
    /// <exception cref="StoreRejectedException">The window is empty, the step is under 1 ms, or it makes more steps than the store answers per call.</exception>
    IReadOnlyList<WindowSummary> SummarizeSteps(Selector selector, TimeRange window, long stepMs, IReadOnlyList<string> groupBy, SummaryOptions options);

    /// <summary>Series of a metric (or of every metric when null), with their extent.</summary>
    IReadOnlyList<SeriesInfo> ListSeries(string? metric = null);

    /// <summary>Removes one series and all its buckets; false when it did not exist.</summary>
    bool Delete(SeriesKey key);

    /// <summary>Counts and estimated memory, per tier and per shard.</summary>
    StoreStats GetStats();

    /// <summary>Rolls aged buckets into coarser tiers and drops those past retention, at the store clock's time.</summary>
    void Roll();
}

/// <summary>Outcome of an accepted batch.</summary>
/// <param name="Accepted">Values applied (0 for a duplicate).</param>
/// <param name="Duplicate">True when this (producer, sequence) was applied before and was not applied again.</param>
public readonly record struct AppendResult(long Accepted, bool Duplicate);

/// <summary>A window query's answer.</summary>
/// <param name="Groups">One entry per group, ordered by their label values.</param>
/// <param name="Covered">Span of the buckets actually merged (bucket-aligned; may reach beyond the window), or the window itself when no bucket overlapped.</param>
public sealed record WindowSummary(IReadOnlyList<GroupSummary> Groups, TimeRange Covered);

/// <summary>One group of a window query.</summary>
/// <param name="Labels">The group-by labels and their values (empty string where a series lacks the label).</param>
/// <param name="Summary">The merged figures.</param>
/// <param name="SeriesMerged">How many series were merged into this group.</param>
/// <param name="Sketch">The merged sketch, for callers that compare distributions.</param>
public sealed record GroupSummary(IReadOnlyDictionary<string, string> Labels, Summary Summary, int SeriesMerged, Sketches.SeriesSketch Sketch);

/// <summary>A series in the catalogue.</summary>
public sealed record SeriesInfo(SeriesKey Key, long Count, TimeRange Extent, int Buckets);

/// <summary>Store figures.</summary>
/// <param name="Series">Series held.</param>
/// <param name="Buckets">Buckets held, all tiers.</param>
/// <param name="EstimatedBytes">Estimated sketch bytes, all tiers.</param>
/// <param name="Tiers">Figures per tier.</param>
/// <param name="Shards">Figures per shard.</param>
/// <param name="ProducerMarks">Producers whose highest applied sequence is remembered (see <see cref="StoreOptions.ProducerMarkRetention"/>).</param>
public sealed record StoreStats(int Series, long Buckets, long EstimatedBytes, IReadOnlyList<TierStats> Tiers, IReadOnlyList<ShardStats> Shards, int ProducerMarks);

/// <summary>Figures of one tier across all series.</summary>
public sealed record TierStats(TimeSpan BucketWidth, long Buckets, long EstimatedBytes);

/// <summary>Figures of one shard.</summary>
public sealed record ShardStats(int Shard, int Series, long Buckets, long EstimatedBytes);
