using Microsoft.Extensions.Logging;
using SummaryService.Formats.Store;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Store.Persistence;

/// <summary>
/// The one translation between the store's persistence records (<see cref="LoggedWrite"/>, snapshot
/// marks and series) and their protobuf messages, shared by every medium: log segment files and
/// snapshot directories here, database rows in a cluster. A medium adds only its own framing.
/// </summary>
public static class StoreRecordCodec
{
    /// <summary>Format version written into log records; a reader refuses records of a newer one.</summary>
    public static uint LogFormatVersion => LogSegments.FormatVersion;

    /// <summary>Format version written into snapshot manifests and shard headers.</summary>
    public static uint SnapshotFormatVersion => SnapshotFiles.FormatVersion;

    /// <summary>True when a snapshot of this format version can be read.</summary>
    public static bool CanReadSnapshot(uint version) => SnapshotFiles.CanRead(version);

    /// <summary>A logged write as its record; an uploaded sketch is encoded at once.</summary>
    public static LogRecord ToRecord(LoggedWrite write)
    {
        ArgumentNullException.ThrowIfNull(write);
        var record = new LogRecord { Lsn = write.Lsn, Metric = write.Key.Metric, Producer = write.Producer, Sequence = write.Sequence, FormatVersion = LogSegments.FormatVersion };
        foreach (var (name, value) in write.Key.Labels)
        {
            record.Labels.Add(name, value);
        }

        record.Values.AddRange(write.Values);
        record.TimesUnixMs.AddRange(write.TimesUnixMs);
        if (write.Sketch is not null)
        {
            record.Sketch = SketchCodec.ToState(write.Sketch);
        }

        return record;
    }

    /// <summary>A record read back as the write it logged; throws what <see cref="RecoveryReport.IsUnusableContent"/> recognises when its content is invalid.</summary>
    public static LoggedWrite FromRecord(LogRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        return new(
            record.Lsn,
            new SeriesKey(record.Metric, record.Labels),
            record.Producer,
            record.Sequence,
            [.. record.Values],
            [.. record.TimesUnixMs],
            record.Sketch is null ? null : SketchCodec.FromState(record.Sketch));
    }

    /// <summary>
    /// A record read back for replay: its write, or null when its content is unusable, which is then
    /// counted and told in <paramref name="report"/> (replay goes on without it).
    /// </summary>
    public static LoggedWrite? ReplayableWrite(LogRecord record, RecoveryReport report, ILogger logger)
    {
        ArgumentNullException.ThrowIfNull(record);
        ArgumentNullException.ThrowIfNull(report);
        try
        {
            return FromRecord(record);
        }
        catch (Exception ex) when (RecoveryReport.IsUnusableContent(ex))
        {
            report.SkipRecord(record.Lsn, record.Metric, ex.Message, logger);
            return null;
        }
    }

    /// <summary>One series of a snapshot as its record.</summary>
    public static SeriesRecord ToRecord(SeriesKey key, IReadOnlyList<StoredBucket> buckets)
    {
        ArgumentNullException.ThrowIfNull(key);
        ArgumentNullException.ThrowIfNull(buckets);
        var record = new SeriesRecord { Metric = key.Metric };
        foreach (var (name, value) in key.Labels)
        {
            record.Labels.Add(name, value);
        }

        foreach (StoredBucket bucket in buckets)
        {
            record.Buckets.Add(new BucketRecord { Tier = (uint)bucket.Tier, StartUnixMs = bucket.StartUnixMs, Sketch = SketchCodec.ToState(bucket.Sketch) });
        }

        return record;
    }

    /// <summary>A series record read back, decoded only when loaded.</summary>
    public static SeriesImage ImageOf(SeriesRecord record)
    {
        ArgumentNullException.ThrowIfNull(record);
        return new(record.Metric, () =>
        {
            var key = new SeriesKey(record.Metric, record.Labels);
            var buckets = record.Buckets.Select(b => new StoredBucket(b.Tier > int.MaxValue ? -1 : (int)b.Tier, b.StartUnixMs, SketchCodec.FromState(b.Sketch))).ToArray();
            return (key, buckets);
        });
    }

    /// <summary>A shard's mark as the header written before its series.</summary>
    public static ShardHeader ToHeader(ShardMark shard, ulong generation)
    {
        ArgumentNullException.ThrowIfNull(shard);
        var header = new ShardHeader { FormatVersion = SnapshotFiles.FormatVersion, Generation = generation, Shard = (uint)shard.Shard, ShardCount = (uint)shard.ShardCount, AppliedLsn = shard.AppliedLsn };
        header.TierWidthsMs.AddRange(shard.TierWidthsMs);
        return header;
    }

    /// <summary>A shard header read back.</summary>
    public static ShardMark MarkOf(ShardHeader header)
    {
        ArgumentNullException.ThrowIfNull(header);
        return new((int)header.Shard, (int)header.ShardCount, header.AppliedLsn, [.. header.TierWidthsMs]);
    }

    /// <summary>A generation's mark as its manifest.</summary>
    public static SnapshotManifest ToManifest(SnapshotMark mark)
    {
        ArgumentNullException.ThrowIfNull(mark);
        var manifest = new SnapshotManifest
        {
            FormatVersion = SnapshotFiles.FormatVersion,
            Generation = mark.Generation,
            CreatedUnixMs = mark.CreatedUnixMs,
            ShardCount = (uint)mark.ShardLsns.Count,
            LogStart = mark.LogStart,
        };
        manifest.ShardLsns.AddRange(mark.ShardLsns);
        foreach (var (producer, produced) in mark.Producers)
        {
            manifest.Producers[producer] = produced.Highest;
            manifest.ProducersLastSeenUnixMs[producer] = produced.LastSeenUnixMs;
        }

        return manifest;
    }

    /// <summary>
    /// A manifest read back. Snapshots written before last-seen times were kept count their
    /// producers as heard from at creation.
    /// </summary>
    public static SnapshotMark MarkOf(SnapshotManifest manifest)
    {
        ArgumentNullException.ThrowIfNull(manifest);
        var producers = new Dictionary<string, ProducerMark>(StringComparer.Ordinal);
        foreach (var (producer, highest) in manifest.Producers)
        {
            long seen = manifest.ProducersLastSeenUnixMs.TryGetValue(producer, out long at) ? at : manifest.CreatedUnixMs;
            producers[producer] = new ProducerMark(highest, seen);
        }

        return new SnapshotMark(manifest.Generation, manifest.CreatedUnixMs, [.. manifest.ShardLsns], manifest.LogStart, producers);
    }
}
