using Microsoft.Extensions.Diagnostics.HealthChecks;
using SummaryService.Store;

namespace SummaryService.Server.Hosting;

/// <summary>
/// Healthy once the store is open and answers a figures call; unhealthy (not serving) while writes
/// are refused because the data directory cannot be written — queries are still answered then —
/// and degraded while snapshots fail but a log still makes writes durable. Reported through the
/// standard gRPC health service.
/// </summary>
public sealed class StoreHealthCheck(ISeriesStore store, IStoreMaintenance upkeep) : IHealthCheck
{
    /// <inheritdoc/>
    public async Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        if (upkeep.WriteTrouble is { } trouble)
        {
            return HealthCheckResult.Unhealthy($"writes are refused: {trouble}");
        }

        if (upkeep.SnapshotTrouble is { } snapshots)
        {
            return HealthCheckResult.Degraded(snapshots);
        }

        StoreStats stats = await store.GetStatsAsync(cancellationToken).ConfigureAwait(false);
        return HealthCheckResult.Healthy($"{stats.Series} series, {stats.Buckets} buckets.");
    }
}
