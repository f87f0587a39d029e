using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Cluster.Tests.Support;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Cluster.Tests;

/// <summary>
/// The calls beyond Summarize, Timeline and the catalogue on two real server processes in Orleans
/// mode, against one real server alone on the same data: a push stream, comparisons and the
/// standout ranking answer as one server answers; a watch, the store figures per node and per
/// partition, a snapshot of every partition and a removal work across the nodes.
/// </summary>
[Collection(ClusterProcesses.Name)]
public sealed class ClusterRpcTests(ClusterServices services)
{
    private const int Partitions = 8;

    [Fact]
    public async Task Every_other_call_works_across_the_nodes_as_on_one_server()
    {
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        Batch[] batches = [.. Parcels.Batches(now).Select(Parcels.ToWire)];
        using var singleData = new TempDirectory();
        await using ServerProcess single = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = singleData.Path });
        using var singleChannel = GrpcChannel.ForAddress(single.Address);
        foreach (Batch batch in batches)
        {
            await new Ingest.IngestClient(singleChannel).PushAsync(batch);
        }

        using var clusterData = new TempDirectory();
        await using var nodes = await ClusterNodes.StartAsync(2, await services.Postgres.NewEmptyDatabaseAsync(), services.Redis.Configuration, $"parcels-{Guid.NewGuid():N}", clusterData.Path, Partitions);

        // One stream into one node: every batch answered in order, each reaching its own partition.
        using (AsyncDuplexStreamingCall<Batch, PushReply> stream = new Ingest.IngestClient(nodes.Channels[0]).PushStream())
        {
            Task<List<PushReply>> replies = ReadAllAsync(stream.ResponseStream);
            foreach (Batch batch in batches)
            {
                await stream.RequestStream.WriteAsync(batch);
            }

            await stream.RequestStream.CompleteAsync();
            Assert.Equal(batches.Select(b => ((ulong)b.Values.Count, b.Sequence, "")), (await replies).Select(r => (r.Accepted, r.Sequence, r.Error)));
        }

        var window = new Window { Range = new TimeRange { FromUnixMs = now - 7_200_000, ToUnixMs = now + 1 } };
        var compare = new CompareRequest
        {
            A = new Side { Selector = Dock("north"), Window = window },
            B = new Side { Selector = Dock("south"), Window = window },
        };
        var standout = new StandoutRequest { Selector = new Selector { Metric = Parcels.Metric }, SplitBy = "belt", Window = window };
        var expectedQuery = new Query.QueryClient(singleChannel);
        var query = new Query.QueryClient(nodes.Channels[1]);
        WireAnswers.Equal(await expectedQuery.CompareAsync(compare), await query.CompareAsync(compare));
        WireAnswers.Equal(await expectedQuery.StandoutAsync(standout), await query.StandoutAsync(standout));

        // A watch's first update: every value of the last two hours, wherever its partition lives.
        var watch = new WatchRequest { Query = new SummarizeRequest { Selector = new Selector { Metric = Parcels.Metric }, Window = new Window { Last = Duration.FromTimeSpan(TimeSpan.FromHours(2)) } }, MaxUpdates = 1 };
        using (AsyncServerStreamingCall<SummarizeReply> watching = query.Watch(watch))
        {
            List<SummarizeReply> updates = await ReadAllAsync(watching.ResponseStream);
            Assert.Equal((ulong)batches.Sum(b => b.Values.Count), updates.Single().Groups.Single().Summary.Count);
        }

        // Store figures per partition, each naming its node, and per node.
        var admin = new Admin.AdminClient(nodes.Channels[0]);
        HoldingsReply holdings = await admin.HoldingsAsync(new HoldingsRequest());
        Assert.Equal(12u, holdings.Series);
        Assert.Equal(Partitions, holdings.Shards.Count);
        Assert.All(holdings.Shards, s => Assert.Contains(s.Node, holdings.Nodes.Select(n => n.Node)));
        Assert.Equal((uint)Partitions, (uint)holdings.Nodes.Sum(n => n.Partitions));
        Assert.Equal(holdings.Series, (uint)holdings.Nodes.Sum(n => n.Series));
        Assert.All(holdings.Nodes, n => nodes.IndexOf(n.Node));

        WriteSnapshotReply snapshot = await new Admin.AdminClient(nodes.Channels[1]).WriteSnapshotAsync(new WriteSnapshotRequest());
        Assert.Equal(12u, snapshot.Series);

        // A removal through one node is gone on the other, and a second one finds nothing.
        var north = new RemoveSeriesRequest { Metric = Parcels.Metric, Labels = { ["dock"] = "north", ["belt"] = "a" } };
        RemoveSeriesReply removed = await new Admin.AdminClient(nodes.Channels[1]).RemoveSeriesAsync(north);
        Assert.Equal((ulong)batches.Where(b => b.Labels["dock"] == "north" && b.Labels["belt"] == "a").Sum(b => b.Values.Count), removed.Count);
        CatalogueReply catalogue = await new Query.QueryClient(nodes.Channels[0]).CatalogueAsync(new CatalogueRequest { Metric = Parcels.Metric });
        Assert.Equal(11, catalogue.Series.Count);
        Assert.DoesNotContain(catalogue.Series, s => s.Labels["dock"] == "north" && s.Labels["belt"] == "a");
        var again = await Assert.ThrowsAsync<RpcException>(async () => await admin.RemoveSeriesAsync(north));
        Assert.Equal(StatusCode.NotFound, again.StatusCode);
    }

    private static Selector Dock(string dock) => new() { Metric = Parcels.Metric, LabelEquals = { ["dock"] = dock } };

    private static async Task<List<T>> ReadAllAsync<T>(IAsyncStreamReader<T> stream)
    {
        var all = new List<T>();
        while (await stream.MoveNext(CancellationToken.None))
        {
            all.Add(stream.Current);
        }

        return all;
    }
}
