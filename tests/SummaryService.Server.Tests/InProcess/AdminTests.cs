using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class AdminTests
{
    [Fact]
    public async Task Catalogue_removal_snapshot_and_holdings()
    {
        await using var server = new TestServer();

        // Every batch at one instant, the middle of the last whole 10 s bucket: "now" would let two
        // batches of one series straddle a bucket edge and make the bucket count depend on the clock.
        long at = ((DateTimeOffset.UtcNow.ToUnixTimeMilliseconds() / 10_000) - 1) * 10_000 + 5_000;
        Batch At(Batch batch)
        {
            batch.TimeUnixMs = at;
            return batch;
        }

        await server.Ingest.PushAsync(At(Requests.Batch("shop.a", [1, 2, 3], ("host", "x"))));
        await server.Ingest.PushAsync(At(Requests.Batch("shop.b", [4])));

        var all = await server.Query.CatalogueAsync(new CatalogueRequest());
        Assert.Equal(["shop.a", "shop.b"], all.Series.Select(s => s.Metric));
        Assert.Equal(3ul, all.Series[0].Count);
        Assert.Equal("x", all.Series[0].Labels["host"]);
        Assert.Single((await server.Query.CatalogueAsync(new CatalogueRequest { Metric = "shop.b" })).Series);

        var numbered = At(Requests.Batch("shop.b", [5]));
        numbered.Producer = "till-7";
        numbered.Sequence = 1;
        await server.Ingest.PushAsync(numbered);

        var stats = await server.Admin.HoldingsAsync(new HoldingsRequest());
        Assert.Equal(2u, stats.Series);
        Assert.Equal(1u, stats.ProducerMarks);
        Assert.Equal(2ul, stats.Buckets);
        Assert.Equal("Wal", stats.Durability);
        Assert.Equal(4, stats.Tiers.Count);

        var snapshot = await server.Admin.WriteSnapshotAsync(new WriteSnapshotRequest());
        Assert.Equal(2u, snapshot.Series);
        Assert.True(snapshot.Bytes > 0);

        var deleted = await server.Admin.RemoveSeriesAsync(new RemoveSeriesRequest { Metric = "shop.a", Labels = { ["host"] = "x" } });
        Assert.Equal(3ul, deleted.Count);
        var again = await Assert.ThrowsAsync<RpcException>(async () => await server.Admin.RemoveSeriesAsync(new RemoveSeriesRequest { Metric = "shop.a", Labels = { ["host"] = "x" } }));
        Assert.Equal(StatusCode.NotFound, again.StatusCode);
        Assert.Equal(["shop.b"], (await server.Query.CatalogueAsync(new CatalogueRequest())).Series.Select(s => s.Metric));
    }

    [Fact]
    public async Task Snapshots_are_a_failed_precondition_without_durability()
    {
        await using var server = new TestServer(new Dictionary<string, string?> { ["Persistence:Durability"] = "None" });
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Admin.WriteSnapshotAsync(new WriteSnapshotRequest()));
        Assert.Equal(StatusCode.FailedPrecondition, ex.StatusCode);
    }
}
