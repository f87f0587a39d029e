using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Server.Hosting;

/// <summary>Periodic snapshots (default every 30 s), bounding what a crash can lose and how much log replays.</summary>
public sealed class SnapshotService(IStoreMaintenance store, IOptions<PersistenceSettings> settings, TimeProvider time, ILogger<SnapshotService> logger)
    : PeriodicWork(time, logger)
{
    /// <inheritdoc/>
    protected override TimeSpan Interval => settings.Value.SnapshotInterval;

    /// <inheritdoc/>
    protected override string WorkName => "Periodic snapshot";

    /// <inheritdoc/>
    protected override Task ExecuteAsync(CancellationToken stoppingToken) =>
        store.Durability == DurabilityMode.None ? Task.CompletedTask : base.ExecuteAsync(stoppingToken);

    /// <inheritdoc/>
    protected override Task RunOnceAsync(CancellationToken cancellationToken) => store.WriteSnapshotAsync(cancellationToken);
}
