using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class QueryValidationTests
{
    public static TheoryData<string, string> BadQueries => new()
    {
        { "no-selector", "selector.metric" },
        { "no-window", "window is missing" },
        { "from-after-to", "window.range" },
        { "negative-last", "window.last" },
        { "quantile-above-one", "quantiles[1] is 1.5" },
        { "confidence-one", "confidence is 1" },
        { "nan-threshold", "rank_of[0] is NaN" },
        { "descending-edges", "histogram.edges[1]" },
        { "unknown-group-by", "group_by[0] is 'colour'" },
        { "repeated-group-by", "group_by[1]" },
    };

    [Theory]
    [MemberData(nameof(BadQueries))]
    public async Task A_bad_query_is_invalid_argument_naming_the_field_and_reads_nothing(string kind, string mention)
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.q", [1, 2, 3], ("region", "north")));
        var request = Requests.Summarize("shop.q");
        switch (kind)
        {
            case "no-selector": request.Selector = null; break;
            case "no-window": request.Window = null; break;
            case "from-after-to": request.Window = Requests.Range(10, 10); break;
            case "negative-last": request.Window = new Window { Last = Duration.FromTimeSpan(TimeSpan.FromSeconds(-5)) }; break;
            case "quantile-above-one": request.Quantiles.Add([0.5, 1.5]); break;
            case "confidence-one": request.Confidence = 1; break;
            case "nan-threshold": request.RankOf.Add(double.NaN); break;
            case "descending-edges": request.Histogram = new Contract.V1.HistogramSpec { Edges = { 5, 1 } }; break;
            case "unknown-group-by": request.GroupBy.Add("colour"); break;
            default: request.GroupBy.Add(["region", "region"]); break;
        }

        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(request));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains(mention, ex.Status.Detail, StringComparison.Ordinal);
        Assert.Equal(3ul, Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.q"))).Groups).Summary.Count);
    }

    [Fact]
    public async Task Series_refuses_a_missing_or_too_fine_step()
    {
        await using var server = new TestServer(new Dictionary<string, string?> { ["Server:MaxSeriesSteps"] = "100" });
        await server.Ingest.PushAsync(Requests.Batch("shop.s", [1]));
        var missing = new SeriesRequest { Selector = Requests.Selector("shop.s"), Window = Requests.Last(TimeSpan.FromHours(1)) };
        Assert.Equal(StatusCode.InvalidArgument, (await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SeriesAsync(missing))).StatusCode);
        var fine = new SeriesRequest(missing) { Step = Duration.FromTimeSpan(TimeSpan.FromSeconds(1)) };
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SeriesAsync(fine));
        Assert.Contains("3600 points", ex.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Watch_needs_a_trailing_window()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.w", [1]));
        var request = new WatchRequest { Query = new SummarizeRequest { Selector = Requests.Selector("shop.w"), Window = Requests.Range(0, 10) } };
        using var call = server.Query.Watch(request);
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await call.ResponseStream.MoveNext());
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("query.window", ex.Status.Detail, StringComparison.Ordinal);
    }
}
