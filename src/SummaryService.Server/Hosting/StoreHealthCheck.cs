using Microsoft.Extensions.Diagnostics.HealthChecks;

namespace SummaryService.Server.Hosting;

/// <summary>Healthy once the store is open and answers a figures call; reported through the standard gRPC health service.</summary>
public sealed class StoreHealthCheck(StoreHost host) : IHealthCheck
{
    /// <inheritdoc/>
    public Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default)
    {
        var stats = host.Store.GetStats();
        return Task.FromResult(HealthCheckResult.Healthy($"{stats.Series} series, {stats.Buckets} buckets."));
    }
}
