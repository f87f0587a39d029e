using Microsoft.Extensions.Diagnostics.HealthChecks;

namespace SummaryService.Server.Hosting;

/// <summary>
/// Healthy once the store is open and answers a figures call; unhealthy (not serving) while writes
/// are refused because the data directory cannot be written — queries are still answered then —
/// and degraded while snapshots fail but a log still makes writes durable. Reported through the
/// standard gRPC health service.
/// </summary>
public sealed class StoreHealthCheck(StoreHost host) : IHealthCheck
{
    /// <inheritdoc/>
    public Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        if (host.WriteTrouble is { } trouble)
        {
            return Task.FromResult(HealthCheckResult.Unhealthy($"writes are refused: {trouble}"));
        }

        if (host.SnapshotTrouble is { } snapshots)
        {
            return Task.FromResult(HealthCheckResult.Degraded(snapshots));
        }

        var stats = host.Store.GetStats();
        return Task.FromResult(HealthCheckResult.Healthy($"{stats.Series} series, {stats.Buckets} buckets."));
    }
}
