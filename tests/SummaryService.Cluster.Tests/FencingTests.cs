using Microsoft.Extensions.Logging.Abstractions;
using Npgsql;
using SummaryService.Cluster.Postgres;
using SummaryService.Cluster.Tests.Support;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Tests;

/// <summary>
/// Two activations of one partition against one database, as a node that the cluster declared
/// dead but that still runs leaves them: the older one is fenced out of every write, and what the
/// partition holds is what the newer one acknowledged.
/// </summary>
public sealed class FencingTests(PostgresServer postgres) : IClassFixture<PostgresServer>
{
    private const int Partition = 5;

    [Fact]
    public async Task An_activation_superseded_by_a_newer_one_can_no_longer_write_its_partition()
    {
        await using NpgsqlDataSource database = NpgsqlDataSource.Create(await postgres.NewDatabaseAsync());
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        List<SeriesBatch> batches = Parcels.Batches(now);

        // Two nodes, each with its own log writer, as two server processes have.
        await using var oldNode = new PostgresLogWriter(database, NullLogger<PostgresLogWriter>.Instance);
        await using var newNode = new PostgresLogWriter(database, NullLogger<PostgresLogWriter>.Instance);
        PersistentSeriesStore old = Open(database, oldNode);
        foreach (SeriesBatch batch in batches.Take(20))
        {
            await old.AppendAsync(batch);
        }

        PersistentSeriesStore current = Open(database, newNode);
        Assert.Equal(20, current.Recovery.LogRecordsReplayed);

        // The old activation's write, its snapshot and so its log trimming are all refused.
        SeriesBatch stale = Stale(now);
        var refused = await Assert.ThrowsAsync<PartitionFencedException>(async () => await old.AppendAsync(stale));
        Assert.Contains($"partition {Partition} was activated again elsewhere (epoch 2); this activation (epoch 1)", refused.Message, StringComparison.Ordinal);
        await Assert.ThrowsAsync<PartitionFencedException>(async () => await old.WriteSnapshotAsync());

        foreach (SeriesBatch batch in batches.Skip(20))
        {
            Assert.False((await current.AppendAsync(batch)).Duplicate);
        }

        Assert.NotNull(await current.WriteSnapshotAsync());
        await Assert.ThrowsAsync<PartitionFencedException>(async () => await old.AppendAsync(Stale(now, sequence: 2)));

        // Read back as the next activation would: everything the current one acknowledged, once,
        // and nothing of the stale writes.
        await using var thirdNode = new PostgresLogWriter(database, NullLogger<PostgresLogWriter>.Instance);
        PersistentSeriesStore next = Open(database, thirdNode);
        WindowSummary all = await next.SummarizeAsync(new SeriesSelector(Parcels.Metric), new TimeWindow(now - 7_200_000, now + 1), [], new());

        // Whole grams: count and sum are exact (common practice: integers below 2^53 add exactly in doubles).
        Assert.Equal(batches.Sum(b => b.Values.Length), all.Groups.Single().Summary.Count);
        Assert.Equal(batches.Sum(b => b.Values.ToArray().Sum()), all.Groups.Single().Summary.Sum);
        Assert.Empty(await next.ListSeriesAsync("parcel.stale.grams"));
    }

    [Fact]
    public async Task Every_activation_claims_a_higher_epoch_than_the_last()
    {
        await using NpgsqlDataSource database = NpgsqlDataSource.Create(await postgres.NewDatabaseAsync());
        long[] epochs = [.. Enumerable.Range(0, 4).Select(_ => PartitionEpochs.Claim(database, Partition))];
        Assert.Equal([1L, 2L, 3L, 4L], epochs);
        Assert.Equal(1L, PartitionEpochs.Claim(database, Partition + 1));
    }

    private static SeriesBatch Stale(long now, ulong sequence = 1) => new()
    {
        Metric = "parcel.stale.grams",
        Values = new[] { 1_000.0 },
        TimeUnixMs = now - 60_000,
        Producer = "stale-sorter",
        Sequence = sequence,
    };

    private static PersistentSeriesStore Open(NpgsqlDataSource database, PostgresLogWriter writer)
    {
        var (log, snapshots) = new PostgresPartitionStorage(database, writer, NullLogger<PostgresPartitionStorage>.Instance).Open(Partition);
        return PersistentSeriesStore.Open(new StoreOptions(), new PersistenceOptions { SnapshotsKept = 1 }, log, snapshots, TimeProvider.System, NullLogger.Instance);
    }
}
