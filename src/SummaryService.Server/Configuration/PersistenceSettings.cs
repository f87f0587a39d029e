using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;

namespace SummaryService.Server.Configuration;

/// <summary>The <c>Persistence</c> section: where data lives, how durable an acknowledgement is, and the background intervals.</summary>
public sealed class PersistenceSettings
{
    /// <summary>Configuration section name.</summary>
    public const string SectionName = "Persistence";

    /// <summary>Directory holding snapshots and the write-ahead log.</summary>
    public string DataDirectory { get; set; } = "./data";

    /// <summary><c>Wal</c> (default), <c>Snapshot</c> or <c>None</c> (memory only, nothing on disk).</summary>
    public DurabilityMode Durability { get; set; } = DurabilityMode.Wal;

    /// <summary>Time between periodic snapshots.</summary>
    public DurationSetting SnapshotInterval { get; set; } = TimeSpan.FromSeconds(30);

    /// <summary>Shortest time between two log fsyncs (group commit).</summary>
    public DurationSetting LogSyncInterval { get; set; } = TimeSpan.FromMilliseconds(5);

    /// <summary>Snapshot generations kept.</summary>
    public int SnapshotsKept { get; set; } = 2;

    /// <summary>Time between rollup passes that move aged buckets to coarser tiers and drop expired ones.</summary>
    public DurationSetting RollupInterval { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>
    /// Whether aged buckets move out of memory into segment files under <c>segments/</c> (true by
    /// default); false keeps every bucket in memory and in every snapshot. Cluster partitions keep
    /// them in memory either way.
    /// </summary>
    public bool SegmentFiles { get; set; } = true;

    /// <summary>Age past which closed buckets of the first tier leave memory for segment files.</summary>
    public DurationSetting HotSpan { get; set; } = TimeSpan.FromHours(1);

    /// <summary>Buckets leave memory in whole spans of at least this length, so segments come as a few sizeable files.</summary>
    public DurationSetting SegmentSpan { get; set; } = TimeSpan.FromMinutes(10);

    /// <summary>A tier's span holds at least this many of its buckets (when that is longer than <see cref="SegmentSpan"/>).</summary>
    public int BucketsPerSpan { get; set; } = 60;

    /// <summary>The store's segment options, or null when <see cref="SegmentFiles"/> is off.</summary>
    public SegmentOptions? ToSegmentOptions() =>
        SegmentFiles ? new SegmentOptions { HotSpan = HotSpan, SegmentSpan = SegmentSpan, BucketsPerSpan = BucketsPerSpan } : null;

    /// <summary>The store's persistence options.</summary>
    public PersistenceOptions ToPersistenceOptions() => new()
    {
        DataDirectory = DataDirectory,
        Durability = Durability,
        SnapshotInterval = SnapshotInterval,
        LogSyncInterval = LogSyncInterval,
        SnapshotsKept = SnapshotsKept,
        Segments = ToSegmentOptions(),
    };
}
