using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Npgsql;
using Orleans.TestingHost;
using SummaryService.Cluster.Partitions;
using SummaryService.Cluster.Postgres;
using SummaryService.Sketches;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// An Orleans test cluster of two in-process silos whose partitions keep their data in a real
/// PostgreSQL database, and the cluster-side store over it as a server node would use it.
/// </summary>
public sealed class PartitionCluster : IAsyncDisposable
{
    private readonly TestCluster _cluster;

    private PartitionCluster(TestCluster cluster, ClusterSeriesStore store)
    {
        _cluster = cluster;
        Store = store;
    }

    public ClusterSeriesStore Store { get; }

    /// <summary>Starts the silos; <paramref name="brokenPartition"/>, when given, cannot open its storage.</summary>
    public static async Task<PartitionCluster> StartAsync(string postgres, int partitions, TimeSpan? timeout = null, int? brokenPartition = null)
    {
        var builder = new TestClusterBuilder(2);
        builder.Properties[nameof(Postgres)] = postgres;
        builder.Properties[nameof(partitions)] = partitions.ToString(System.Globalization.CultureInfo.InvariantCulture);
        builder.Properties[nameof(brokenPartition)] = brokenPartition?.ToString(System.Globalization.CultureInfo.InvariantCulture) ?? "";
        builder.AddSiloBuilderConfigurator<SiloSetup>();
        TestCluster cluster = builder.Build();
        await cluster.DeployAsync();
        var fanOut = new PartitionFanOut(cluster.GrainFactory, new PartitionMap(partitions), timeout ?? TimeSpan.FromSeconds(30));
        return new PartitionCluster(cluster, new ClusterSeriesStore(fanOut, SeriesSketchOptions.Default, DurabilityMode.Wal));
    }

    /// <summary>Every silo stopped at once without deactivating anything: no final snapshot, as a crash of the whole cluster leaves the database.</summary>
    public async Task CrashAsync()
    {
        foreach (SiloHandle silo in _cluster.Silos.ToArray())
        {
            await _cluster.KillSiloAsync(silo);
        }
    }

    public async ValueTask DisposeAsync() => await _cluster.DisposeAsync();

    private sealed class SiloSetup : ISiloConfigurator
    {
        public void Configure(ISiloBuilder siloBuilder)
        {
            IConfiguration settings = siloBuilder.Configuration;
            int partitions = int.Parse(settings["partitions"]!, System.Globalization.CultureInfo.InvariantCulture);
            string broken = settings["brokenPartition"] ?? "";
            IServiceCollection services = siloBuilder.Services;
            services.AddSingleton(TimeProvider.System);
            services.AddSingleton(_ => NpgsqlDataSource.Create(settings[nameof(Postgres)]!));
            services.AddSingleton<PostgresLogWriter>();
            services.AddSingleton<PostgresPartitionStorage>();
            services.AddSingleton<IPartitionStorage>(provider => broken.Length == 0
                ? provider.GetRequiredService<PostgresPartitionStorage>()
                : new BrokenPartitionStorage(provider.GetRequiredService<PostgresPartitionStorage>(), int.Parse(broken, System.Globalization.CultureInfo.InvariantCulture)));

            // Upkeep timers far apart: the tests take snapshots when they mean to.
            services.AddSingleton(new PartitionSetup(new StoreOptions(), new PersistenceOptions { SnapshotInterval = TimeSpan.FromHours(1) }, TimeSpan.FromHours(1), partitions));
        }
    }

    /// <summary>Storage one partition cannot open, as when its database rows cannot be read.</summary>
    private sealed class BrokenPartitionStorage(IPartitionStorage inner, int broken) : IPartitionStorage
    {
        public (IBatchLog Log, ISnapshotStore Snapshots) Open(int partition) =>
            partition == broken ? throw new InvalidOperationException($"storage of partition {partition} is unreadable in this test") : inner.Open(partition);
    }
}
