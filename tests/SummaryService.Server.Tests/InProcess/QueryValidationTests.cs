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
    public async Task Timeline_refuses_a_missing_or_too_fine_step_in_the_duration_syntax()
    {
        await using var server = new TestServer(new Dictionary<string, string?> { ["Server:MaxTimelineSteps"] = "100" });
        await server.Ingest.PushAsync(Requests.Batch("shop.s", [1]));
        var missing = new TimelineRequest { Selector = Requests.Selector("shop.s"), Window = Requests.Last(TimeSpan.FromHours(1)) };
        Assert.Equal(StatusCode.InvalidArgument, (await Assert.ThrowsAsync<RpcException>(async () => await server.Query.TimelineAsync(missing))).StatusCode);
        var fine = new TimelineRequest(missing) { Step = Duration.FromTimeSpan(TimeSpan.FromSeconds(1)) };
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.TimelineAsync(fine));
        Assert.Contains("step 1s cuts the window of 1h into 3600 steps; at most 100 are allowed", ex.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_reversed_range_names_both_ends_in_iso_8601_utc_beside_unix_ms()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.r", [1]));
        var request = Requests.Summarize("shop.r");
        request.Window = Requests.Range(1_796_175_000_000, 1_796_174_999_000);
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(request));

        // 1,796,175,000 s after 1970-01-01T00:00:00Z is 2026-12-02T01:30:00Z: 20,789 days and 5,400 s (checked with Python's datetime).
        Assert.Equal("window.range from_unix_ms 2026-12-02T01:30:00Z (Unix ms 1796175000000) is not before to_unix_ms 2026-12-02T01:29:59Z (Unix ms 1796174999000); windows are half-open [from, to).", ex.Status.Detail);
    }

    [Fact]
    public async Task A_selection_that_matches_nothing_is_named_in_the_display_form()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.d", [1], ("region", "north"), ("host", "a")));
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(Requests.Summarize("shop.d", ("region", "south"), ("host", "a"))));
        Assert.Equal(StatusCode.NotFound, ex.StatusCode);
        Assert.Equal("no series matches shop.d · host=a · region=south.", ex.Status.Detail);
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
