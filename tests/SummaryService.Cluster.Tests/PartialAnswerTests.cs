using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using Npgsql;
using SummaryService.Cluster.Partitions;
using SummaryService.Cluster.Tests.Support;
using SummaryService.Contract.V1;
using SummaryService.Store;
using SummaryService.TestSupport;

namespace SummaryService.Cluster.Tests;

/// <summary>
/// A real server process in Orleans mode with one partition made to miss every deadline: the test
/// holds a lock on the partition's epoch row in PostgreSQL, so its activation waits on its claim
/// for as long as the test wants. Queries then fail with Unavailable naming it, unless the caller
/// accepts a partial answer, which comes flagged with what it covers.
/// </summary>
[Collection(ClusterProcesses.Name)]
public sealed class PartialAnswerTests(ClusterServices services, Xunit.Abstractions.ITestOutputHelper output)
{
    private const int Partitions = 16;

    [Fact]
    public async Task A_partition_missing_its_deadline_fails_queries_unless_the_caller_accepts_a_flagged_partial_answer()
    {
        var clock = System.Diagnostics.Stopwatch.StartNew();
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        string database = await services.Postgres.NewDatabaseAsync();
        string clusterId = $"parcels-{Guid.NewGuid():N}";
        using var data = new TempDirectory();
        var settings = new Dictionary<string, string> { ["Cluster__PartitionTimeout"] = "00:00:03" };
        List<SeriesBatch> batches = Parcels.Batches(now);
        var map = new PartitionMap(Partitions);
        int late = map.Of(new SeriesKey(batches[0].Metric, batches[0].Labels));
        SeriesBatch[] answering = [.. batches.Where(b => map.Of(new SeriesKey(b.Metric, b.Labels)) != late)];
        Assert.NotEmpty(answering);
        await using (var first = await ClusterNodes.StartAsync(1, database, services.Redis.Configuration, clusterId, data.Path, Partitions, settings))
        {
            foreach (SeriesBatch batch in batches)
            {
                await new Ingest.IngestClient(first.Channels[0]).PushAsync(Parcels.ToWire(batch));
            }
        }

        output.WriteLine($"{clock.Elapsed}: first node stopped");
        await using NpgsqlDataSource source = NpgsqlDataSource.Create(database);
        await using NpgsqlConnection holder = await source.OpenConnectionAsync();
        await using NpgsqlTransaction held = await holder.BeginTransactionAsync();
        await using (var lockRow = new NpgsqlCommand($"SELECT epoch FROM summary_partition_owner WHERE partition = {late} FOR UPDATE", holder, held))
        {
            Assert.NotNull(await lockRow.ExecuteScalarAsync());
        }

        await using var nodes = await ClusterNodes.StartAsync(1, database, services.Redis.Configuration, clusterId, data.Path, Partitions, settings, waitServing: false);
        output.WriteLine($"{clock.Elapsed}: restarted");
        var query = new Query.QueryClient(nodes.Channels[0]);
        var window = new Window { Range = new TimeRange { FromUnixMs = now - 7_200_000, ToUnixMs = now + 1 } };
        var summarize = new SummarizeRequest { Selector = new Selector { Metric = Parcels.Metric }, Window = window };

        // By default: Unavailable naming the partition, once the node is up and the others are active.
        // Why it did not answer depends on how long it has waited: the 3 s deadline, or its claim's
        // own database timeout (30 s) failing the activation; either way it is named.
        string expected = $"1 of {Partitions} partitions did not answer: partition {late} ";
        await Poll.UntilAsync(async () => (await RefusalAsync(() => query.SummarizeAsync(summarize)))?.Contains(expected, StringComparison.Ordinal) == true, TimeSpan.FromMinutes(2), expected);
        output.WriteLine($"{clock.Elapsed}: refused");
        var timeline = new TimelineRequest { Selector = summarize.Selector, Window = window, Step = Duration.FromTimeSpan(TimeSpan.FromMinutes(30)) };
        string? timelineRefusal = await RefusalAsync(() => query.TimelineAsync(timeline));
        Assert.True(timelineRefusal?.Contains(expected, StringComparison.Ordinal), timelineRefusal);

        // Opted in: the other partitions' answer, flagged with what it covers.
        summarize.AcceptPartial = true;
        SummarizeReply partial = await query.SummarizeAsync(summarize);
        AssertCoverage(late, partial.Coverage);
        double[] answered = [.. answering.SelectMany(b => b.Values.ToArray())];

        // Whole grams: count and sum are exact (common practice: integers below 2^53 add exactly in doubles).
        Assert.Equal((ulong)answered.Length, partial.Groups.Single().Summary.Count);
        Assert.Equal(answered.Sum(), partial.Groups.Single().Summary.Sum);

        timeline.AcceptPartial = true;
        TimelineReply steps = await query.TimelineAsync(timeline);
        AssertCoverage(late, steps.Coverage);
        Assert.Equal((ulong)answered.Length, (ulong)steps.Steps.SelectMany(s => s.Groups).Sum(g => (long)g.Summary.Count));

        var compare = new CompareRequest
        {
            A = new Side { Selector = new Selector { Metric = Parcels.Metric, LabelEquals = { ["dock"] = "south" } }, Window = window },
            B = new Side { Selector = new Selector { Metric = Parcels.Metric, LabelEquals = { ["dock"] = "east" } }, Window = window },
            AcceptPartial = true,
        };
        AssertCoverage(late, (await query.CompareAsync(compare)).Coverage);
        var standout = new StandoutRequest { Selector = summarize.Selector, SplitBy = "dock", Window = window, AcceptPartial = true };
        AssertCoverage(late, (await query.StandoutAsync(standout)).Coverage);

        // Released, the partition activates and whole answers come back, unflagged.
        output.WriteLine($"{clock.Elapsed}: partial answers checked");
        await held.RollbackAsync();
        summarize.AcceptPartial = false;
        SummarizeReply? whole = null;
        await Poll.UntilAsync(async () => (whole = await AnswerAsync(() => query.SummarizeAsync(summarize))) is not null, TimeSpan.FromMinutes(2), "a whole answer once the partition is released");
        output.WriteLine($"{clock.Elapsed}: whole again");
        Assert.Null(whole!.Coverage);
        Assert.Equal((ulong)batches.Sum(b => b.Values.Length), whole.Groups.Single().Summary.Count);
    }

    private static void AssertCoverage(int late, Coverage? coverage)
    {
        Assert.NotNull(coverage);
        Assert.Equal([(uint)late], coverage.Missing);
        Assert.Equal((uint)Partitions, coverage.Partitions);
        Assert.Equal((uint)Partitions - 1, coverage.Answered);
        Assert.Equal(15.0 / 16.0, coverage.Share);
    }

    /// <summary>The Unavailable detail of a refused call; null when it was answered or failed otherwise (the node still starting).</summary>
    private static async Task<string?> RefusalAsync<T>(Func<AsyncUnaryCall<T>> call)
    {
        try
        {
            await call();
            return null;
        }
        catch (RpcException ex)
        {
            return ex.StatusCode == StatusCode.Unavailable ? ex.Status.Detail : null;
        }
    }

    private static async Task<T?> AnswerAsync<T>(Func<AsyncUnaryCall<T>> call)
        where T : class
    {
        try
        {
            return await call();
        }
        catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable)
        {
            return null;
        }
    }
}
