using Microsoft.Extensions.Logging;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Store.Persistence;

/// <summary>What start-up recovered from disk and what it had to drop.</summary>
public sealed class RecoveryReport
{
    /// <summary>Generation of the snapshot loaded, or null when none was usable.</summary>
    public ulong? SnapshotGeneration { get; set; }

    /// <summary>True when no generation was whole and the loaded one is the valid part of a damaged one (the warnings say what was lost).</summary>
    public bool SnapshotSalvaged { get; set; }

    /// <summary>Series and buckets read from the snapshot.</summary>
    public int SnapshotSeries { get; set; }

    /// <inheritdoc cref="SnapshotSeries"/>
    public int SnapshotBuckets { get; set; }

    /// <summary>Snapshot generations skipped because they were damaged or incomplete, with the reason.</summary>
    public List<string> SnapshotsRejected { get; } = [];

    /// <summary>Log records read, replayed, skipped because the snapshot already held them, or dropped as older than retention.</summary>
    public int LogRecordsRead { get; set; }

    /// <inheritdoc cref="LogRecordsRead"/>
    public int LogRecordsReplayed { get; set; }

    /// <inheritdoc cref="LogRecordsRead"/>
    public int LogRecordsAlreadyInSnapshot { get; set; }

    /// <summary>Log records whose frame checked out but whose content could not be applied; skipped.</summary>
    public int LogRecordsUnusable { get; set; }

    /// <summary>Values in replayed records that had aged past retention and were dropped.</summary>
    public long ValuesPastRetention { get; set; }

    /// <summary>Bytes cut from damaged or torn log tails.</summary>
    public long LogBytesCut { get; set; }

    /// <summary>Everything worth a warning, one line each.</summary>
    public List<string> Warnings { get; } = [];

    /// <summary>True for what a log record whose frame checks out can still hold: content that cannot be decoded or applied.</summary>
    public static bool IsUnusableContent(Exception exception) =>
        exception is SketchFormatException or ArgumentException or InvalidOperationException or IndexOutOfRangeException or OverflowException;

    /// <summary>Counts and tells one log record skipped for its content.</summary>
    public void SkipRecord(ulong lsn, string metric, string reason, ILogger logger)
    {
        ArgumentNullException.ThrowIfNull(logger);
        LogRecordsUnusable++;
        Warnings.Add($"log record {lsn} of {metric} skipped: {reason}");
        logger.LogWarning("Write-ahead log record {Lsn} skipped: {Reason}", lsn, reason);
    }

    /// <inheritdoc/>
    public override string ToString() =>
        $"snapshot {(SnapshotGeneration?.ToString() ?? "none")}{(SnapshotSalvaged ? " (salvaged in part)" : "")} ({SnapshotSeries} series, {SnapshotBuckets} buckets; {SnapshotsRejected.Count} rejected), " +
        $"log {LogRecordsRead} records read, {LogRecordsReplayed} replayed, {LogRecordsAlreadyInSnapshot} already in snapshot, {LogRecordsUnusable} unusable, {LogBytesCut} bytes cut, {ValuesPastRetention} values past retention";
}
