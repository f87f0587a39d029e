using Microsoft.Extensions.Logging.Abstractions;
using Npgsql;
using SummaryService.Cluster.Postgres;
using SummaryService.Cluster.Tests.Support;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Tests;

/// <summary>One partition's store over the PostgreSQL log and snapshot tables, without Orleans: what is kept, replayed and trimmed.</summary>
public sealed class PostgresPersistenceTests(PostgresServer postgres) : IClassFixture<PostgresServer>
{
    private const int Partition = 3;

    [Fact]
    public async Task A_snapshot_trims_the_log_and_reopening_replays_only_what_came_after()
    {
        await using NpgsqlDataSource database = NpgsqlDataSource.Create(await postgres.NewDatabaseAsync());
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        List<SeriesBatch> batches = Parcels.Batches(now);
        await using (var writer = new PostgresLogWriter(database, NullLogger<PostgresLogWriter>.Instance))
        {
            PersistentSeriesStore store = Open(database, writer);
            foreach (SeriesBatch batch in batches.Take(30))
            {
                await store.AppendAsync(batch);
            }

            Assert.Equal(30, await CountAsync(database, "summary_batch_log"));
            await store.WriteSnapshotAsync();
            Assert.Equal(0, await CountAsync(database, "summary_batch_log"));
            foreach (SeriesBatch batch in batches.Skip(30))
            {
                await store.AppendAsync(batch);
            }

            Assert.Equal(batches.Count - 30, await CountAsync(database, "summary_batch_log"));

            // Left open, as a crash leaves it: only what the log and the snapshot hold comes back.
        }

        await using var again = new PostgresLogWriter(database, NullLogger<PostgresLogWriter>.Instance);
        PersistentSeriesStore reopened = Open(database, again);
        Assert.Equal(1UL, reopened.Recovery.SnapshotGeneration);
        Assert.Equal(batches.Count - 30, reopened.Recovery.LogRecordsReplayed);
        WindowSummary all = await reopened.SummarizeAsync(new SeriesSelector(Parcels.Metric), new TimeWindow(now - 7_200_000, now + 1), [], new());

        // Whole grams: count and sum are exact (common practice: integers below 2^53 add exactly in doubles).
        Assert.Equal(batches.Sum(b => b.Values.Length), all.Groups.Single().Summary.Count);
        Assert.Equal(batches.Sum(b => b.Values.ToArray().Sum()), all.Groups.Single().Summary.Sum);
        Assert.True((await reopened.AppendAsync(batches[0])).Duplicate);
        Assert.True((await reopened.AppendAsync(batches[^1])).Duplicate);
    }

    [Fact]
    public async Task The_schema_steps_run_once_however_often_nodes_start()
    {
        await using NpgsqlDataSource database = NpgsqlDataSource.Create(await postgres.NewEmptyDatabaseAsync());
        await Task.WhenAll(Enumerable.Range(0, 3).Select(_ => PostgresSchema.MigrateAsync(database)));
        await PostgresSchema.MigrateAsync(database);
        Assert.Equal(PostgresSchema.Version, await CountAsync(database, "summary_schema_version"));
    }

    private static PersistentSeriesStore Open(NpgsqlDataSource database, PostgresLogWriter writer)
    {
        var (log, snapshots) = new PostgresPartitionStorage(database, writer, NullLogger<PostgresPartitionStorage>.Instance).Open(Partition);
        return PersistentSeriesStore.Open(new StoreOptions(), new PersistenceOptions { SnapshotsKept = 1 }, log, snapshots, TimeProvider.System, NullLogger.Instance);
    }

    private static async Task<long> CountAsync(NpgsqlDataSource database, string table)
    {
        await using NpgsqlCommand command = database.CreateCommand($"SELECT count(*) FROM {table}");
        return (long)(await command.ExecuteScalarAsync())!;
    }
}
