using SummaryService.Store.Persistence;

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

    /// <summary>The store's persistence options.</summary>
    public PersistenceOptions ToPersistenceOptions() => new()
    {
        DataDirectory = DataDirectory,
        Durability = Durability,
        SnapshotInterval = SnapshotInterval,
        LogSyncInterval = LogSyncInterval,
        SnapshotsKept = SnapshotsKept,
    };
}
