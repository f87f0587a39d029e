using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Store;

namespace SummaryService.Server.Hosting;

/// <summary>Periodic rollup: aged buckets move to coarser tiers and buckets past retention are dropped, so memory follows the tiers' promise.</summary>
public sealed class RollupService(IStoreMaintenance store, IOptions<PersistenceSettings> settings, TimeProvider time, ILogger<RollupService> logger)
    : PeriodicWork(time, logger)
{
    /// <inheritdoc/>
    protected override TimeSpan Interval => settings.Value.RollupInterval;

    /// <inheritdoc/>
    protected override string WorkName => "Rollup";

    /// <inheritdoc/>
    protected override Task RunOnceAsync(CancellationToken cancellationToken) => store.RollAsync(cancellationToken).AsTask();
}
