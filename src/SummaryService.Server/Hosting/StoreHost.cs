using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Server.Telemetry;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Server.Hosting;

/// <summary>
/// The single-node composition root of the store: opens (and recovers) it on first use, hands it
/// out as <see cref="ISeriesStore"/> and <see cref="IStoreMaintenance"/>, and disposes it when the
/// host is disposed — after the server has stopped taking calls — which writes the final snapshot.
/// With durability <c>None</c> the store lives in memory and nothing touches the disk. Only the
/// registration knows this type: services and background work take the two interfaces.
/// </summary>
public sealed class StoreHost : IAsyncDisposable
{
    private readonly PersistentSeriesStore? _persistent;

    /// <summary>Opens the configured store.</summary>
    public StoreHost(IOptions<StoreSettings> store, IOptions<PersistenceSettings> persistence, IOptions<AuthSettings> auth, IDataFiles files, IProducerLedger producers, TimeProvider time, ServerMetrics metrics, ILogger<StoreHost> logger)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(persistence);
        ArgumentNullException.ThrowIfNull(auth);
        ArgumentNullException.ThrowIfNull(metrics);

        StoreOptions options = OptionsOf(store.Value, auth.Value);
        Func<StoreStats> stats;
        if (persistence.Value.Durability == DurabilityMode.None)
        {
            var memory = new ShardedSeriesStore(options, time, producers);
            (Store, Maintenance, stats) = (memory, memory, memory.GetStats);
            logger.LogWarning("Durability is None: data lives in memory only and is lost when the server stops.");
        }
        else
        {
            _persistent = PersistentSeriesStore.Open(options, persistence.Value.ToPersistenceOptions(), time, logger, metrics.LogSynced, files, producers);
            _persistent.SnapshotObserved = metrics.SnapshotTaken;
            (Store, Maintenance, stats) = (_persistent, _persistent, _persistent.GetStats);
        }

        // The gauges read the local store directly: an observable instrument's callback is synchronous.
        metrics.ObserveStore(() =>
        {
            StoreStats figures = stats();
            return (figures.Series, figures.Buckets);
        });
    }

    /// <summary>The store's settings; with keys configured, a key's metric prefixes are the tenants whose series are counted together.</summary>
    public static StoreOptions OptionsOf(StoreSettings store, AuthSettings auth)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(auth);
        return store.ToStoreOptions() with
        {
            TenantPrefixes = auth.Enabled ? auth.Keys.SelectMany(k => k.Prefixes).Where(p => p.Length > 0).Distinct(StringComparer.Ordinal).ToArray() : [],
        };
    }

    /// <summary>The store every service uses.</summary>
    public ISeriesStore Store { get; }

    /// <summary>Its upkeep: rollup, snapshots, persistence health.</summary>
    public IStoreMaintenance Maintenance { get; }

    /// <inheritdoc/>
    public async ValueTask DisposeAsync()
    {
        if (_persistent is not null)
        {
            await _persistent.DisposeAsync().ConfigureAwait(false);
        }
    }
}
