namespace SummaryService.Store.Persistence;

/// <summary>How much an acknowledged batch survives.</summary>
public enum DurabilityMode
{
    /// <summary>Logged and fsynced before it is acknowledged: survives kill -9 and power loss of the disk cache.</summary>
    Wal,

    /// <summary>Only periodic snapshots: a crash loses up to one snapshot interval.</summary>
    Snapshot,

    /// <summary>Memory only.</summary>
    None,
}
