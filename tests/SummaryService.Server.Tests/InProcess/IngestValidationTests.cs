using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class IngestValidationTests
{
    public static TheoryData<string, StatusCode, string> BadBatches => new()
    {
        { "nan", StatusCode.InvalidArgument, "values[1]" },
        { "infinity", StatusCode.InvalidArgument, "values[0]" },
        { "empty-metric", StatusCode.InvalidArgument, "metric" },
        { "long-metric", StatusCode.InvalidArgument, "metric" },
        { "bad-label-key", StatusCode.InvalidArgument, "label name '9x'" },
        { "too-many-labels", StatusCode.InvalidArgument, "labels has 5" },
        { "no-values", StatusCode.InvalidArgument, "values has 0" },
        { "too-many-values", StatusCode.InvalidArgument, "values has 101" },
        { "too-old", StatusCode.InvalidArgument, "time_unix_ms" },
        { "future", StatusCode.InvalidArgument, "time_unix_ms" },
        { "times-mismatch", StatusCode.InvalidArgument, "value_times_unix_ms" },
        { "series-limit", StatusCode.ResourceExhausted, "limit" },
    };

    [Theory]
    [MemberData(nameof(BadBatches))]
    public async Task A_bad_batch_is_refused_with_its_field_named_and_changes_nothing(string kind, StatusCode code, string mention)
    {
        await using var server = new TestServer(new Dictionary<string, string?>
        {
            ["Store:MaxLabels"] = "4",
            ["Store:MaxValuesPerBatch"] = "100",
            ["Store:MaxSeries"] = "1",
        });
        await server.Ingest.PushAsync(Requests.Batch("shop.ok", [1, 2, 3]));
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        Batch bad = kind switch
        {
            "nan" => Requests.Batch("shop.ok", [1, double.NaN]),
            "infinity" => Requests.Batch("shop.ok", [double.PositiveInfinity]),
            "empty-metric" => Requests.Batch("", [1]),
            "long-metric" => Requests.Batch(new string('m', 201), [1]),
            "bad-label-key" => Requests.Batch("shop.ok", [1], ("9x", "v")),
            "too-many-labels" => Requests.Batch("shop.ok", [1], ("a", "1"), ("b", "2"), ("c", "3"), ("d", "4"), ("e", "5")),
            "no-values" => Requests.Batch("shop.ok", []),
            "too-many-values" => Requests.Batch("shop.ok", Enumerable.Repeat(1.0, 101)),
            "too-old" => new Batch(Requests.Batch("shop.ok", [1])) { TimeUnixMs = now - (100L * 86_400_000) },
            "future" => new Batch(Requests.Batch("shop.ok", [1])) { TimeUnixMs = now + 3_600_000 },
            "times-mismatch" => new Batch(Requests.Batch("shop.ok", [1, 2])) { ValueTimesUnixMs = { now } },
            _ => Requests.Batch("shop.other", [1]),
        };

        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Ingest.PushAsync(bad));
        Assert.Equal(code, ex.StatusCode);
        Assert.Contains(mention, ex.Status.Detail, StringComparison.Ordinal);
        var after = await server.Query.SummarizeAsync(Requests.Summarize("shop.ok"));
        Assert.Equal(3ul, Assert.Single(after.Groups).Summary.Count);
        Assert.Single((await server.Query.CatalogueAsync(new CatalogueRequest())).Series);
    }

    [Fact]
    public async Task A_time_outside_the_store_is_named_in_iso_8601_utc_beside_unix_ms()
    {
        await using var server = new TestServer(new Dictionary<string, string?> { ["Store:MaxFuture"] = "90s" });
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        long ahead = (now + 3_600_000) / 1000 * 1000;
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Ingest.PushAsync(new Batch(Requests.Batch("shop.ahead", [1])) { TimeUnixMs = ahead }));

        // ISO 8601 extended format in UTC ("Z"), whole seconds: the standard's form, written out here independently.
        string iso = DateTimeOffset.FromUnixTimeMilliseconds(ahead).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", System.Globalization.CultureInfo.InvariantCulture);
        Assert.StartsWith($"time_unix_ms is {iso} (Unix ms {ahead}), more than 1m30s ahead of the store's clock (", ex.Status.Detail, StringComparison.Ordinal);
        Assert.Matches(@"clock \(\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d{3})?Z \(Unix ms \d+\)\)\.$", ex.Status.Detail);
    }

    [Fact]
    public async Task An_oversized_message_is_refused_before_any_work()
    {
        await using var server = new TestServer(new Dictionary<string, string?> { ["Server:MaxMessageBytes"] = "4096" });
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Ingest.PushAsync(Requests.Batch("shop.big", Enumerable.Repeat(1.5, 2000))));
        Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
        Assert.Empty((await server.Query.CatalogueAsync(new CatalogueRequest())).Series);
    }

    [Fact]
    public async Task Push_stream_answers_every_batch_in_order_and_goes_on_after_an_error()
    {
        await using var server = new TestServer();
        using var call = server.Ingest.PushStream();
        Batch With(ulong sequence, params double[] values) => new(Requests.Batch("shop.stream", values)) { Producer = "checkout-7", Sequence = sequence };
        await call.RequestStream.WriteAsync(With(1, 1, 2));
        await call.RequestStream.WriteAsync(With(2, double.NaN));
        await call.RequestStream.WriteAsync(With(3, 3, 4, 5));
        await call.RequestStream.WriteAsync(With(3, 3, 4, 5));
        await call.RequestStream.CompleteAsync();
        var replies = new List<PushReply>();
        await foreach (var reply in call.ResponseStream.ReadAllAsync())
        {
            replies.Add(reply);
        }

        Assert.Equal([1ul, 2ul, 3ul, 3ul], replies.Select(r => r.Sequence));
        Assert.Equal([2ul, 0ul, 3ul, 0ul], replies.Select(r => r.Accepted));
        Assert.Equal("InvalidArgument", replies[1].ErrorCode);
        Assert.Equal("values[0]", replies[1].ErrorField);
        Assert.Contains("NaN", replies[1].Error, StringComparison.Ordinal);
        Assert.True(replies[3].Duplicate);
        Assert.Equal(5ul, Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.stream"))).Groups).Summary.Count);
    }

    [Fact]
    public async Task A_repeated_unary_batch_is_acknowledged_as_duplicate_and_not_counted_again()
    {
        await using var server = new TestServer();
        var batch = new Batch(Requests.Batch("shop.retry", [1, 2])) { Producer = "p", Sequence = 9 };
        Assert.False((await server.Ingest.PushAsync(batch)).Duplicate);
        var again = await server.Ingest.PushAsync(batch);
        Assert.True(again.Duplicate);
        Assert.Equal(9ul, again.Sequence);
        Assert.Equal(2ul, Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.retry"))).Groups).Summary.Count);
    }
}
