using SummaryService.Store.Persistence;

namespace SummaryService.Store;

/// <summary>
/// Upkeep of a store, apart from its reads and writes: rollup of aged buckets, snapshots, and the
/// state of its persistence for health reporting. Background work and the admin calls use it; a
/// distributed back end runs the same upkeep per partition behind the same calls.
/// </summary>
public interface IStoreMaintenance
{
    /// <summary>Durability mode in force.</summary>
    DurabilityMode Durability { get; }

    /// <summary>Why writes are refused now (the storage cannot be written), or null; while set, health reports not serving.</summary>
    string? WriteTrouble { get; }

    /// <summary>Why the last snapshot failed, or null; health then reports degraded.</summary>
    string? SnapshotTrouble { get; }

    /// <summary>Rolls aged buckets into coarser tiers and drops those past retention, at the store clock's time; forgets producers silent past their retention.</summary>
    ValueTask RollAsync(CancellationToken cancellationToken = default);

    /// <summary>Writes a snapshot now; null when the store keeps none (durability None).</summary>
    Task<SnapshotInfo?> WriteSnapshotAsync(CancellationToken cancellationToken = default);
}

/// <summary>One snapshot written.</summary>
public sealed record SnapshotInfo(ulong Generation, int Series, long Bytes, TimeSpan Elapsed);
