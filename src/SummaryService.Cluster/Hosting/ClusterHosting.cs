using System.Net;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Hosting;
using Npgsql;
using SummaryService.Cluster.Partitions;
using SummaryService.Cluster.Postgres;
using SummaryService.Store;

namespace SummaryService.Cluster.Hosting;

/// <summary>Makes the host a node of the cluster: an Orleans silo whose partitions are the store behind the seam.</summary>
public static class ClusterHosting
{
    /// <summary>
    /// Co-hosts a silo (membership in Redis, partitions kept in PostgreSQL, whose tables are brought
    /// up to date before the silo starts) and registers <see cref="ClusterSeriesStore"/> as the
    /// <see cref="ISeriesStore"/> and <see cref="IStoreMaintenance"/> every service uses.
    /// </summary>
    /// <param name="builder">The host being built.</param>
    /// <param name="settings">The <c>Cluster</c> section; must be in <see cref="ClusterMode.Orleans"/> and pass <see cref="ClusterSettings.Problem"/>.</param>
    /// <param name="setup">Each partition's store settings, from the server's own.</param>
    public static IHostApplicationBuilder AddOrleansCluster(this IHostApplicationBuilder builder, ClusterSettings settings, Func<IServiceProvider, PartitionSetup> setup)
    {
        ArgumentNullException.ThrowIfNull(builder);
        ArgumentNullException.ThrowIfNull(settings);
        if (settings.Problem() is { } problem)
        {
            throw new InvalidOperationException(problem);
        }

        IServiceCollection services = builder.Services;
        services.AddSingleton(_ => NpgsqlDataSource.Create(settings.Postgres));
        services.AddSingleton<PostgresLogWriter>();
        services.AddSingleton<IPartitionStorage, PostgresPartitionStorage>();
        services.AddSingleton(setup);

        // Before the silo: a partition may activate as soon as it starts, and reads the tables then.
        services.AddHostedService<SchemaMigration>();
        builder.UseOrleans(silo =>
        {
            silo.Configure<Orleans.Configuration.ClusterOptions>(options =>
            {
                options.ClusterId = settings.ClusterId;
                options.ServiceId = settings.ClusterId;
            });
            silo.ConfigureEndpoints(IPAddress.Parse(settings.AdvertisedAddress), settings.SiloPort, settings.GatewayPort);
            silo.UseRedisClustering(settings.Redis);
            silo.Configure<Orleans.Configuration.ClusterMembershipOptions>(options => options.ProbeTimeout = settings.ProbeTimeout);
        });

        services.AddSingleton(provider => new PartitionFanOut(provider.GetRequiredService<IGrainFactory>(), new PartitionMap(settings.Partitions), settings.PartitionTimeout));
        services.AddSingleton(provider =>
        {
            PartitionSetup partitions = provider.GetRequiredService<PartitionSetup>();
            return new ClusterSeriesStore(provider.GetRequiredService<PartitionFanOut>(), partitions.Store.Sketch, partitions.Persistence.Durability);
        });
        services.AddSingleton<ISeriesStore>(provider => provider.GetRequiredService<ClusterSeriesStore>());
        services.AddSingleton<IStoreMaintenance>(provider => provider.GetRequiredService<ClusterSeriesStore>());
        return builder;
    }

    /// <summary>Brings the database's tables up to date when the host starts.</summary>
    private sealed class SchemaMigration(NpgsqlDataSource database) : IHostedService
    {
        public Task StartAsync(CancellationToken cancellationToken) => PostgresSchema.MigrateAsync(database, cancellationToken);

        public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;
    }
}
