using SummaryService.Server.Auth;
using SummaryService.Store;

namespace SummaryService.Server.Hosting;

/// <summary>Opens the store before the first call (so recovery happens at start-up) and warns when authentication is off.</summary>
public sealed class StartupNotices(IStoreMaintenance store, ApiKeyRegistry keys, ILogger<StartupNotices> logger) : IHostedService
{
    /// <inheritdoc/>
    public Task StartAsync(CancellationToken cancellationToken)
    {
        if (!keys.Enabled)
        {
            logger.LogWarning("Authentication is off: every caller may write, read and administer. Set Auth:Enabled and Auth:Keys before listening beyond loopback.");
        }

        logger.LogInformation("Store ready with durability {Durability}.", store.Durability);
        return Task.CompletedTask;
    }

    /// <inheritdoc/>
    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;
}
