using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using Grpc.Net.Client;
using Grpc.Reflection.V1Alpha;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>The built server as a separate process on loopback, driven over real HTTP/2.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class EndToEndTests
{
    [Fact]
    public async Task Every_rpc_answers_over_the_wire_and_a_restart_keeps_the_data()
    {
        using var data = new TempDirectory();
        var environment = new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path };
        double[] north = Requests.Latencies(120, 81);
        double[] south = Requests.Latencies(90, 82, mu: 3.4);
        double[] uploaded = Requests.Latencies(60, 83);
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        now -= now % 60_000;

        await using (var server = await ServerProcess.StartAsync(environment))
        {
            using var channel = GrpcChannel.ForAddress(server.Address);
            var ingest = new Ingest.IngestClient(channel);
            var query = new Query.QueryClient(channel);
            var admin = new Admin.AdminClient(channel);

            await ingest.PushAsync(Requests.Batch("shop.e2e.latency", north, ("region", "north")));
            using (var stream = ingest.PushStream())
            {
                await stream.RequestStream.WriteAsync(new Batch(Requests.Batch("shop.e2e.latency", south, ("region", "south"))) { Producer = "e2e", Sequence = 1 });
                await stream.RequestStream.WriteAsync(new Batch(Requests.Batch("shop.e2e.latency", [double.NaN], ("region", "south"))) { Producer = "e2e", Sequence = 2 });
                await stream.RequestStream.CompleteAsync();
                var replies = await stream.ResponseStream.ReadAllAsync().ToListAsync();
                Assert.Equal([1ul, 2ul], replies.Select(r => r.Sequence));
                Assert.Equal("InvalidArgument", replies[1].ErrorCode);
            }

            var sketch = new SeriesSketch();
            sketch.Add(uploaded);
            await ingest.PushSketchAsync(new Contract.V1.SketchUpload { Metric = "shop.e2e.latency", Labels = { ["region"] = "north" }, Sketch = SketchCodec.ToState(sketch) });

            var grouped = Requests.Summarize("shop.e2e.latency");
            grouped.GroupBy.Add("region");
            var reply = await query.SummarizeAsync(grouped);
            double[] northAll = [.. north, .. uploaded];
            Assert.Equal(northAll.Mean(), reply.Groups[0].Summary.Mean, 1e-9); // MathNet.Numerics
            Assert.Equal(south.Variance(), reply.Groups[1].Summary.Variance, 1e-9); // MathNet.Numerics
            Assert.Equal(south.Skewness(), reply.Groups[1].Summary.Skewness, 1e-9); // MathNet.Numerics

            var series = await query.TimelineAsync(new TimelineRequest { Selector = Requests.Selector("shop.e2e.latency"), Window = Requests.Range(now - 120_000, now + 120_000), Step = Duration.FromTimeSpan(TimeSpan.FromMinutes(1)) });
            Assert.Equal(4, series.Steps.Count);
            Assert.Equal(270ul, series.Steps.SelectMany(p => p.Groups).Aggregate(0ul, (sum, g) => sum + g.Summary.Count));

            using (var watch = query.Watch(new WatchRequest { Query = Requests.Summarize("shop.e2e.latency"), Interval = Duration.FromTimeSpan(TimeSpan.FromMilliseconds(100)), MaxUpdates = 2 }))
            {
                var pushes = await watch.ResponseStream.ReadAllAsync().ToListAsync();
                Assert.Equal(2, pushes.Count);
                Assert.All(pushes, p => Assert.Equal(270ul, Assert.Single(p.Groups).Summary.Count));
            }

            var compare = await query.CompareAsync(new CompareRequest
            {
                A = new Side { Selector = Requests.Selector("shop.e2e.latency", ("region", "north")), Window = Requests.Last(TimeSpan.FromHours(1)) },
                B = new Side { Selector = Requests.Selector("shop.e2e.latency", ("region", "south")), Window = Requests.Last(TimeSpan.FromHours(1)) },
                Quantiles = { 0.5 },
            });
            Assert.Equal(northAll.Median(), compare.Shifts[0].A, 1e-12); // MathNet.Numerics
            Assert.Equal(south.Median(), compare.Shifts[0].B, 1e-12); // MathNet.Numerics

            Assert.Equal(2, (await query.CatalogueAsync(new CatalogueRequest())).Series.Count);
            Assert.Equal(2u, (await admin.HoldingsAsync(new HoldingsRequest())).Series);
            await admin.PushScratchAndRemoveAsync(ingest);
            Assert.True((await admin.WriteSnapshotAsync(new WriteSnapshotRequest())).Generation >= 1);

            var reflection = new ServerReflection.ServerReflectionClient(channel);
            using var listing = reflection.ServerReflectionInfo();
            await listing.RequestStream.WriteAsync(new ServerReflectionRequest { ListServices = "" });
            await listing.RequestStream.CompleteAsync();
            Assert.True(await listing.ResponseStream.MoveNext());
            Assert.Contains(listing.ResponseStream.Current.ListServicesResponse.Service, s => s.Name == "summary.v1.Query");

            // Written after the last snapshot, so only the log can bring it back.
            await ingest.PushAsync(Requests.Batch("shop.e2e.after", [7, 8, 9]));
        }

        await using (var restarted = await ServerProcess.StartAsync(environment))
        {
            using var channel = GrpcChannel.ForAddress(restarted.Address);
            var query = new Query.QueryClient(channel);
            var grouped = Requests.Summarize("shop.e2e.latency");
            grouped.GroupBy.Add("region");
            var reply = await query.SummarizeAsync(grouped);
            Assert.Equal([180ul, 90ul], reply.Groups.Select(g => g.Summary.Count));
            Assert.Equal(south.Mean(), reply.Groups[1].Summary.Mean, 1e-9); // MathNet.Numerics
            Assert.Equal(3ul, Assert.Single((await query.SummarizeAsync(Requests.Summarize("shop.e2e.after"))).Groups).Summary.Count);
        }
    }

    [Fact]
    public async Task A_bad_setting_stops_the_server_with_its_name()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path, ["Store__ShardCount"] = "3" }, waitForHealth: false);
        Assert.True(await server.WaitForExitAsync(TimeSpan.FromSeconds(30)));
        Assert.NotEqual(0, server.ExitCode);
        Assert.Contains("Store:ShardCount", server.Output, StringComparison.Ordinal);
    }
}

/// <summary>Small helpers the end-to-end test reads better with.</summary>
internal static class EndToEndSteps
{
    public static async Task<List<T>> ToListAsync<T>(this IAsyncEnumerable<T> source)
    {
        var list = new List<T>();
        await foreach (T item in source)
        {
            list.Add(item);
        }

        return list;
    }

    /// <summary>RemoveSeries over the wire: a scratch series goes, then removing it again is NotFound.</summary>
    public static async Task PushScratchAndRemoveAsync(this Admin.AdminClient admin, Ingest.IngestClient ingest)
    {
        await ingest.PushAsync(Requests.Batch("shop.e2e.scratch", [1]));
        Assert.Equal(1ul, (await admin.RemoveSeriesAsync(new RemoveSeriesRequest { Metric = "shop.e2e.scratch" })).Count);
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await admin.RemoveSeriesAsync(new RemoveSeriesRequest { Metric = "shop.e2e.scratch" }));
        Assert.Equal(StatusCode.NotFound, ex.StatusCode);
    }
}
