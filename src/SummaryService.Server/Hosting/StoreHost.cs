using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Server.Telemetry;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Server.Hosting;

/// <summary>
/// Owns the store for the life of the host: opens (and recovers) it on first use, and disposes it
/// when the host is disposed — after the server has stopped taking calls — which writes the final
/// snapshot. With durability <c>None</c> the store lives in memory and nothing touches the disk.
/// </summary>
public sealed class StoreHost : IAsyncDisposable
{
    private readonly PersistentSeriesStore? _persistent;

    /// <summary>Opens the configured store.</summary>
    public StoreHost(IOptions<StoreSettings> store, IOptions<PersistenceSettings> persistence, IOptions<AuthSettings> auth, IDataFiles files, TimeProvider time, ServerMetrics metrics, ILogger<StoreHost> logger)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(persistence);
        ArgumentNullException.ThrowIfNull(auth);
        ArgumentNullException.ThrowIfNull(metrics);

        // With keys configured, a key's metric prefixes are the tenants whose series are counted together.
        StoreOptions options = store.Value.ToStoreOptions() with
        {
            TenantPrefixes = auth.Value.Enabled ? auth.Value.Keys.SelectMany(k => k.Prefixes).Where(p => p.Length > 0).Distinct(StringComparer.Ordinal).ToArray() : [],
        };
        Durability = persistence.Value.Durability;
        if (Durability == DurabilityMode.None)
        {
            Store = new ShardedSeriesStore(options, time);
            logger.LogWarning("Durability is None: data lives in memory only and is lost when the server stops.");
        }
        else
        {
            _persistent = PersistentSeriesStore.Open(options, persistence.Value.ToPersistenceOptions(), time, logger, metrics.LogSynced, files);
            _persistent.SnapshotObserved = metrics.SnapshotTaken;
            Store = _persistent;
        }

        metrics.ObserveStore(() =>
        {
            StoreStats stats = Store.GetStats();
            return (stats.Series, stats.Buckets);
        });
    }

    /// <summary>The store every service uses.</summary>
    public ISeriesStore Store { get; }

    /// <summary>Why writes are refused now (the data directory cannot be written), or null; while set, health reports not serving.</summary>
    public string? WriteTrouble => _persistent?.WriteTrouble;

    /// <summary>Why the last snapshot failed, or null; health then reports degraded.</summary>
    public string? SnapshotTrouble => _persistent?.SnapshotTrouble;

    /// <summary>Durability mode in force.</summary>
    public DurabilityMode Durability { get; }

    /// <summary>Writes a snapshot now; null when durability is None.</summary>
    public async Task<SnapshotInfo?> TakeSnapshotAsync(CancellationToken cancellationToken)
    {
        return _persistent is null ? null : await _persistent.TakeSnapshotAsync(cancellationToken).ConfigureAwait(false);
    }

    /// <inheritdoc/>
    public async ValueTask DisposeAsync()
    {
        if (_persistent is not null)
        {
            await _persistent.DisposeAsync().ConfigureAwait(false);
        }
    }
}
