using Microsoft.Extensions.Options;
using SummaryService.Cluster.Hosting;
using SummaryService.Cluster.Partitions;
using SummaryService.Server.Configuration;

namespace SummaryService.Server.Hosting;

/// <summary>
/// Which store stands behind the seam, by <c>Cluster:Mode</c>: the embedded store of one process
/// (<see cref="StoreHost"/>, with the periodic snapshot and rollup services), or this node's view
/// of the cluster's partitions, which run their own snapshots and rollup.
/// </summary>
internal static class StoreRegistration
{
    /// <summary>Registers <c>ISeriesStore</c> and <c>IStoreMaintenance</c> with their upkeep.</summary>
    public static void AddStore(this WebApplicationBuilder builder)
    {
        ClusterSettings cluster = builder.Configuration.GetSection(ClusterSettings.SectionName).Get<ClusterSettings>() ?? new ClusterSettings();
        IServiceCollection services = builder.Services;
        if (cluster.Mode == ClusterMode.Orleans)
        {
            builder.AddOrleansCluster(cluster, provider =>
            {
                PersistenceSettings persistence = provider.GetRequiredService<IOptions<PersistenceSettings>>().Value;
                var options = StoreHost.OptionsOf(provider.GetRequiredService<IOptions<StoreSettings>>().Value, provider.GetRequiredService<IOptions<AuthSettings>>().Value);
                return new PartitionSetup(options, persistence.ToPersistenceOptions(), persistence.RollupInterval, cluster.Partitions);
            });
            return;
        }

        services.AddSingleton<StoreHost>();
        services.AddSingleton(provider => provider.GetRequiredService<StoreHost>().Store);
        services.AddSingleton(provider => provider.GetRequiredService<StoreHost>().Maintenance);
        services.AddHostedService<SnapshotService>();
        services.AddHostedService<RollupService>();
    }
}
