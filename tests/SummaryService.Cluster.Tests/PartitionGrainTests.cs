using SummaryService.Cluster.Tests.Support;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;

namespace SummaryService.Cluster.Tests;

/// <summary>
/// The partitions on an in-process Orleans cluster of two silos over a real PostgreSQL: whatever
/// the spread of series over partitions and silos, the cluster answers what one store answers.
/// </summary>
public sealed class PartitionGrainTests(PostgresServer postgres) : IClassFixture<PostgresServer>
{
    private static readonly SummaryOptions Options = new();

    [Theory]
    [InlineData(3)]
    [InlineData(40)]
    public async Task Windows_steps_and_the_catalogue_through_the_partitions_equal_one_stores(int perBatch)
    {
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        await using var cluster = await PartitionCluster.StartAsync(await postgres.NewDatabaseAsync(), partitions: 8);
        var single = new ShardedSeriesStore(new StoreOptions(), TimeProvider.System);
        foreach (SeriesBatch batch in Parcels.Batches(now, perBatch))
        {
            AppendResult local = await single.AppendAsync(batch);
            AppendResult remote = await cluster.Store.AppendAsync(batch);
            Assert.Equal(local, remote);
        }

        var selector = new SeriesSelector(Parcels.Metric);

        // An unaligned window: each partition widens it to its own buckets, the answer to all of them.
        var window = new TimeWindow(now - 3_599_993, now - 7);
        foreach (string[] groupBy in new[] { Array.Empty<string>(), ["dock"], ["dock", "belt"] })
        {
            SameAnswers.Equal(await single.SummarizeAsync(selector, window, groupBy, Options), await cluster.Store.SummarizeAsync(selector, window, groupBy, Options));
        }

        var expectedSteps = await single.SummarizeStepsAsync(selector, window, 600_000, ["dock"], Options);
        var actualSteps = await cluster.Store.SummarizeStepsAsync(selector, window, 600_000, ["dock"], Options);
        Assert.Equal(expectedSteps.Count, actualSteps.Count);
        for (int i = 0; i < expectedSteps.Count; i++)
        {
            SameAnswers.Equal(expectedSteps[i], actualSteps[i]);
        }

        Assert.Equal((await single.ListSeriesAsync()).Select(s => (s.Key.Canonical, s.Count, s.Extent)), (await cluster.Store.ListSeriesAsync()).Select(s => (s.Key.Canonical, s.Count, s.Extent)));
        StoreStats stats = await cluster.Store.GetStatsAsync();
        Assert.Equal(12, stats.Series);
        Assert.Equal(8, stats.Partitions.Count);
        Assert.True(stats.Partitions.Count(p => p.Series > 0) > 1, "the twelve series should spread over more than one partition");
    }

    [Fact]
    public async Task Refusals_cross_the_cluster_as_the_store_words_them()
    {
        await using var cluster = await PartitionCluster.StartAsync(await postgres.NewDatabaseAsync(), partitions: 4);
        var nan = new SeriesBatch { Metric = Parcels.Metric, Values = new[] { double.NaN } };
        var refused = await Assert.ThrowsAsync<StoreRejectedException>(async () => await cluster.Store.AppendAsync(nan));
        var single = await Assert.ThrowsAsync<StoreRejectedException>(async () => await new ShardedSeriesStore(new StoreOptions(), TimeProvider.System).AppendAsync(nan));
        Assert.Equal((single.Reason, single.Field, single.Message), (refused.Reason, refused.Field, refused.Message));

        var backwards = await Assert.ThrowsAsync<StoreRejectedException>(async () => await cluster.Store.ReadAsync(new SeriesSelector(Parcels.Metric), new TimeWindow(10, 5), []));
        Assert.Equal(RejectReason.InvalidWindow, backwards.Reason);
    }

    [Fact]
    public async Task Acknowledged_batches_survive_a_crash_of_every_silo_exactly_once()
    {
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        string database = await postgres.NewDatabaseAsync();
        List<SeriesBatch> batches = Parcels.Batches(now);
        int half = batches.Count / 2;
        await using (var first = await PartitionCluster.StartAsync(database, partitions: 8))
        {
            foreach (SeriesBatch batch in batches.Take(half))
            {
                await first.Store.AppendAsync(batch);
            }

            // Half the partitions' state goes into snapshots, the rest stays in the log only.
            Assert.NotNull(await first.Store.WriteSnapshotAsync());
            foreach (SeriesBatch batch in batches.Skip(half))
            {
                await first.Store.AppendAsync(batch);
            }

            await first.CrashAsync();
        }

        await using var second = await PartitionCluster.StartAsync(database, partitions: 8);

        // A producer retrying everything after the crash: every batch is known, none applied twice.
        foreach (SeriesBatch batch in batches)
        {
            Assert.True((await second.Store.AppendAsync(batch)).Duplicate, $"batch {batch.Sequence} was applied twice");
        }

        var all = await second.Store.SummarizeAsync(new SeriesSelector(Parcels.Metric), new TimeWindow(now - 7_200_000, now + 1), [], Options);
        double[] sent = [.. batches.SelectMany(b => b.Values.ToArray())];

        // Whole grams: count and sum are exact (common practice: integers below 2^53 add exactly in doubles).
        Assert.Equal(sent.Length, all.Groups.Single().Summary.Count);
        Assert.Equal(sent.Sum(), all.Groups.Single().Summary.Sum);
    }

    [Fact]
    public async Task A_partition_that_cannot_answer_fails_the_query_naming_it_and_no_partial_answer_is_given()
    {
        await using var cluster = await PartitionCluster.StartAsync(await postgres.NewDatabaseAsync(), partitions: 4, timeout: TimeSpan.FromSeconds(20), brokenPartition: 2);
        var failure = await Assert.ThrowsAsync<StorageUnavailableException>(async () =>
            await cluster.Store.ReadAsync(new SeriesSelector(Parcels.Metric), new TimeWindow(0, 1_000), []));
        Assert.Contains("1 of 4 partitions did not answer: partition 2 failed", failure.Message, StringComparison.Ordinal);
        Assert.Contains("no partial answer", failure.Message, StringComparison.Ordinal);

        // Accepted by the caller, the other partitions answer and the one left out is named.
        WindowSketches partial = await cluster.Store.ReadAsync(new SeriesSelector(Parcels.Metric), new TimeWindow(0, 1_000), [], acceptPartial: true, default);
        Assert.Equal(new PartialRead(4, [2]).Missing, partial.Partial?.Missing);
        Assert.Equal(0.75, partial.Partial!.Share);
    }
}
