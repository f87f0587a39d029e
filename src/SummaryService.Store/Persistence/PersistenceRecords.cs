using SummaryService.Sketches;

namespace SummaryService.Store.Persistence;

/// <summary>One accepted write as the batch log keeps it: values with their resolved times, or an uploaded sketch.</summary>
/// <param name="Lsn">Log sequence number; increases with apply order within a shard.</param>
/// <param name="Key">The series written.</param>
/// <param name="Producer">Producer identity for idempotent retries; empty when unused.</param>
/// <param name="Sequence">The producer's sequence number; 0 when unused.</param>
/// <param name="Values">The values (empty for an upload).</param>
/// <param name="TimesUnixMs">One time for every value, or a single time for all of them (an upload's one instant).</param>
/// <param name="Sketch">The uploaded sketch, or null for values.</param>
public sealed record LoggedWrite(ulong Lsn, SeriesKey Key, string Producer, ulong Sequence, double[] Values, long[] TimesUnixMs, SeriesSketch? Sketch);

/// <summary>One bucket of a series in a snapshot.</summary>
/// <param name="Tier">Index into the store's tiers, finest first.</param>
/// <param name="StartUnixMs">Start of the bucket.</param>
/// <param name="Sketch">Its sketch.</param>
public readonly record struct StoredBucket(int Tier, long StartUnixMs, SeriesSketch Sketch);

/// <summary>What a snapshot records about one shard.</summary>
/// <param name="Shard">Shard index.</param>
/// <param name="ShardCount">Shards of the store that wrote it.</param>
/// <param name="AppliedLsn">Highest log sequence number applied to the shard when it was exported.</param>
/// <param name="TierWidthsMs">Tier widths in ms, so a reader can tell whether the layout changed.</param>
public sealed record ShardMark(int Shard, int ShardCount, ulong AppliedLsn, IReadOnlyList<long> TierWidthsMs);

/// <summary>What a snapshot records about the whole generation.</summary>
/// <param name="Generation">Its number; newer generations have higher numbers.</param>
/// <param name="CreatedUnixMs">When it was taken.</param>
/// <param name="ShardLsns">Per shard, the highest log sequence number it holds.</param>
/// <param name="LogStart">Log records from this number on hold every write this snapshot may lack.</param>
/// <param name="Producers">Every producer's mark when it was taken.</param>
public sealed record SnapshotMark(ulong Generation, long CreatedUnixMs, IReadOnlyList<ulong> ShardLsns, ulong LogStart, IReadOnlyDictionary<string, ProducerMark> Producers)
{
    /// <summary>The highest log sequence number the snapshot holds for a series, by the shard that held it.</summary>
    public ulong LsnOf(SeriesKey key)
    {
        ArgumentNullException.ThrowIfNull(key);
        return ShardLsns[(int)(key.Hash & (ulong)(ShardLsns.Count - 1))];
    }
}

/// <summary>A generation read back: its mark and its shards' series.</summary>
public sealed record SnapshotImage(SnapshotMark Mark, IReadOnlyList<ShardImage> Shards);

/// <summary>One shard of a generation read back.</summary>
public sealed record ShardImage(ShardMark Mark, IReadOnlyList<SeriesImage> Series);

/// <summary>
/// One series of a generation read back, decoded only when loaded: a series that cannot be decoded
/// then fails alone (skipped when salvaging, failing the generation otherwise).
/// </summary>
/// <param name="Metric">Metric name, for messages about it.</param>
/// <param name="Decode">Its key and buckets; throws <see cref="Sketches.Serialization.SketchFormatException"/> or <see cref="ArgumentException"/> when they are invalid.</param>
public sealed record SeriesImage(string Metric, Func<(SeriesKey Key, IReadOnlyList<StoredBucket> Buckets)> Decode);
