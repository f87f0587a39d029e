using SummaryService.Store.Segments;

namespace SummaryService.Store.Persistence;

/// <summary>Where and how the store keeps its data on disk.</summary>
public sealed record PersistenceOptions
{
    /// <summary>Directory holding <c>snapshots/</c> and <c>wal/</c>.</summary>
    public string DataDirectory { get; init; } = "data";

    /// <summary>Durability of acknowledged batches.</summary>
    public DurabilityMode Durability { get; init; } = DurabilityMode.Wal;

    /// <summary>Interval between periodic snapshots.</summary>
    public TimeSpan SnapshotInterval { get; init; } = TimeSpan.FromSeconds(30);

    /// <summary>Shortest time between two log fsyncs: batches arriving meanwhile share the next one (group commit).</summary>
    public TimeSpan LogSyncInterval { get; init; } = TimeSpan.FromMilliseconds(5);

    /// <summary>Snapshot generations kept; the newest is loaded, older ones are the fallback.</summary>
    public int SnapshotsKept { get; init; } = 2;

    /// <summary>How aged buckets are kept in segment files under <c>segments/</c>; null keeps every bucket in memory.</summary>
    public SegmentOptions? Segments { get; init; } = new();
}
