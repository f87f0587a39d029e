using System.Net;
using System.Text;
using Grpc.Core;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Contract.Otlp.Common;
using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using static SummaryService.Server.Tests.Otlp.OtlpExports;

namespace SummaryService.Server.Tests.Otlp;

/// <summary>Hand-built exports against the rules of the OpenTelemetry protocol and data model (reference/otlp-metrics.md).</summary>
public sealed class ExportRulesTests
{
    [Fact]
    public async Task Cumulative_sums_become_differences_with_resets_and_a_resent_point_is_rejected()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);
        ulong start = Now;
        ulong restart = start + 40_000_000;

        // Points 10, 25, 25 again (resent), 4 (a drop: reset with the same start), then 6 from a new
        // start: differences 10, 15, 4 and 6 (data model: cumulative temporality, start_time resets).
        var first = await client.ExportAsync(Request(CumulativeSum("hub.scans", (start, start + 10_000_000, 10), (start, start + 20_000_000, 25))));
        Assert.Null(first.PartialSuccess);
        var resent = await client.ExportAsync(Request(CumulativeSum("hub.scans", (start, start + 20_000_000, 25), (start, start + 30_000_000, 4), (restart, restart + 10_000_000, 6))));
        Assert.Equal(1, resent.PartialSuccess.RejectedDataPoints);
        Assert.Contains("already received", resent.PartialSuccess.ErrorMessage, StringComparison.Ordinal);

        var summary = (await server.Query.SummarizeAsync(Requests.Summarize("hub.scans"))).Groups.Single().Summary;
        Assert.Equal(4UL, summary.Count);
        Assert.Equal(35, summary.Sum);
    }

    [Fact]
    public async Task Cumulative_exponential_histograms_become_differences_with_resets_and_a_resent_point_is_rejected()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);
        ulong start = Now;
        ulong restart = start + 40_000_000;

        // Scale 0: index 0 holds (1, 2], 1 holds (2, 4], 2 holds (4, 8] (data model: ExponentialHistogram).
        // {1.5, 3}, then {1.5, 3} + {1.25, 3.5, 6}: a difference of three values, both extremes new.
        var first = Exponential(scale: 0, offset: 0, counts: [1, 1], min: 1.5, max: 3, sum: 4.5);
        var second = Exponential(scale: 0, offset: 0, counts: [2, 2, 1], min: 1.25, max: 6, sum: 15.25);
        (first.StartTimeUnixNano, first.TimeUnixNano) = (start, start + 10_000_000);
        (second.StartTimeUnixNano, second.TimeUnixNano) = (start, start + 20_000_000);
        Assert.Equal(0, (await client.ExportAsync(Request(ExponentialMetric("hub.weight", AggregationTemporality.Cumulative, first, second)))).PartialSuccess.RejectedDataPoints);

        // The second point again (resent), then a new start time: {5} is all new (data model:
        // a new start_time begins a new accumulation).
        var resent = second.Clone();
        var restarted = Exponential(scale: 0, offset: 2, counts: [1], min: 5, max: 5, sum: 5);
        (restarted.StartTimeUnixNano, restarted.TimeUnixNano) = (restart, restart + 10_000_000);
        var reply = await client.ExportAsync(Request(ExponentialMetric("hub.weight", AggregationTemporality.Cumulative, resent, restarted)));
        Assert.Equal(1, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains("already received", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);

        var summary = (await server.Query.SummarizeAsync(Requests.Summarize("hub.weight"))).Groups.Single().Summary;
        Assert.Equal(6UL, summary.Count);
        Assert.Equal(20.25, summary.Sum);
        Assert.Equal(1.25, summary.Min);
        Assert.Equal(6, summary.Max);
        Assert.False(summary.ExtremesBounded);

        // {5} + {5.5}: the maximum is new, the minimum 5 was there before, so the difference's
        // minimum is known only to lie in (4, 8] and at or above 5: a bound, said so.
        var later = Exponential(scale: 0, offset: 2, counts: [2], min: 5, max: 5.5, sum: 10.5);
        (later.StartTimeUnixNano, later.TimeUnixNano) = (restart, restart + 20_000_000);
        reply = await client.ExportAsync(Request(ExponentialMetric("hub.weight", AggregationTemporality.Cumulative, later)));
        Assert.Equal(0, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains("extremes_bounded", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        summary = (await server.Query.SummarizeAsync(Requests.Summarize("hub.weight"))).Groups.Single().Summary;
        Assert.Equal(7UL, summary.Count);
        Assert.Equal(25.75, summary.Sum);
        Assert.True(summary.ExtremesBounded);
        Assert.Equal(1.25, summary.Min);
        Assert.Equal(6, summary.Max);
    }

    [Fact]
    public async Task What_cannot_be_kept_is_counted_in_partial_success_and_the_rest_is_kept()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);
        var request = Request(
            Gauge("hub.depth", 7),
            Gauge("hub.depth", double.NaN),
            new Metric { Name = "hub.rtt", Summary = new Contract.Otlp.Metrics.Summary { DataPoints = { new SummaryDataPoint { TimeUnixNano = Now, Count = 1, Sum = 2 } } } },
            new Metric { Name = "hub.wait", Histogram = new Contract.Otlp.Metrics.Histogram { AggregationTemporality = AggregationTemporality.Delta, DataPoints = { new HistogramDataPoint { TimeUnixNano = Now, Count = 1, BucketCounts = { 1, 0 }, ExplicitBounds = { 5 } } } } });

        var reply = await client.ExportAsync(request);

        // OTLP: rejected_data_points counts what the server did not accept, error_message says why.
        Assert.Equal(3, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains("NaN", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        Assert.Contains("summary", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        var kept = (await server.Query.SummarizeAsync(Requests.Summarize("hub.depth"))).Groups.Single().Summary;
        Assert.Equal(1UL, kept.Count);
        Assert.Equal(7, kept.Max);
    }

    [Fact]
    public async Task An_inconsistent_exponential_point_is_refused_naming_the_field_and_nothing_changes()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);
        var point = Exponential(scale: 0, offset: 0, counts: [3, 5], min: 1.5, max: 3.5, sum: 20);
        point.Count = 9;

        var refused = await Assert.ThrowsAsync<RpcException>(() => client.ExportAsync(Request(Gauge("hub.depth", 1), ExponentialMetric("hub.weight", point))).ResponseAsync);

        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.Contains("resource_metrics[0].scope_metrics[0].metrics[1].exponential_histogram.data_points[0].count is 9", refused.Status.Detail, StringComparison.Ordinal);
        var nothing = await Assert.ThrowsAsync<RpcException>(() => server.Query.SummarizeAsync(Requests.Summarize("hub.depth")).ResponseAsync);
        Assert.Equal(StatusCode.NotFound, nothing.StatusCode);
    }

    [Fact]
    public async Task An_exponential_point_whose_min_lies_outside_its_buckets_is_rejected_not_merged()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);

        // Scale 0: index 3 holds (8, 16] (data model: ExponentialHistogram), so a min of 1 cannot be.
        var reply = await client.ExportAsync(Request(ExponentialMetric("hub.weight", Exponential(scale: 0, offset: 3, counts: [2], min: 1, max: 12, sum: 13))));

        Assert.Equal(1, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains("min 1 and max 12", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        var nothing = await Assert.ThrowsAsync<RpcException>(() => server.Query.SummarizeAsync(Requests.Summarize("hub.weight")).ResponseAsync);
        Assert.Equal(StatusCode.NotFound, nothing.StatusCode);
    }

    [Fact]
    public async Task Exponential_buckets_are_merged_exactly_so_ranks_at_bucket_edges_are_exact()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);

        // Scale 0: base 2, index 0 holds (1, 2], index 1 holds (2, 4] (data model: ExponentialHistogram).
        // Two exports of 3 and 5 values below 2 and 5 values above: 8 of 18 values are at most 2.
        await client.ExportAsync(Request(ExponentialMetric("hub.weight", Exponential(scale: 0, offset: 0, counts: [3, 5], min: 1.5, max: 3.5, sum: 20))));
        await client.ExportAsync(Request(ExponentialMetric("hub.weight", Exponential(scale: 0, offset: 0, counts: [5, 5], min: 1.25, max: 3.75, sum: 25))));

        var request = Requests.Summarize("hub.weight");
        request.RankOf.Add(2.0);
        var summary = (await server.Query.SummarizeAsync(request)).Groups.Single().Summary;
        Assert.Equal(18UL, summary.Count);
        Assert.Equal(45, summary.Sum);
        Assert.Equal(1.25, summary.Min);
        Assert.Equal(3.75, summary.Max);
        RankEstimate rank = summary.Ranks.Single();
        Assert.Equal(8.0 / 18, rank.Low, 12);
        Assert.Equal(8.0 / 18, rank.High, 12);
    }

    [Fact]
    public async Task Otlp_json_with_string_int64_integer_enums_and_unknown_fields_is_read_over_http()
    {
        await using var server = new TestServer();
        using var http = server.CreateHttpClient();

        // OTLP/JSON (reference/otlp-metrics.md): lowerCamelCase names, 64-bit integers as strings,
        // enums as integers; receivers skip fields they do not know.
        string body = $$$"""
            {"resourceMetrics":[{"resource":{"attributes":[{"key":"service.name","value":{"stringValue":"otterbyte-hub"}},{"key":"host.arch","value":{"stringValue":"arm64"}}]},
              "scopeMetrics":[{"scope":{"name":"hub"},"metrics":[{"name":"hub.parcels","unit":"1","futureField":{"x":1},
                "sum":{"aggregationTemporality":1,"isMonotonic":true,"dataPoints":[{"timeUnixNano":"{{{Now}}}","asInt":"12","attributes":[{"key":"dock.id","value":{"intValue":"3"}}]}]}}]}]}]}
            """;
        using var response = await http.PostAsync("/v1/metrics", new StringContent(body, Encoding.UTF8, "application/json"));

        Assert.Equal(HttpStatusCode.OK, response.StatusCode);
        Assert.Equal("{ }", (await response.Content.ReadAsStringAsync()).Trim());
        var group = (await server.Query.SummarizeAsync(Requests.Summarize("hub.parcels", ("service_name", "otterbyte-hub"), ("dock_id", "3")))).Groups.Single();
        Assert.Equal(12, group.Summary.Sum);
        var catalogue = await server.Query.CatalogueAsync(new CatalogueRequest { Metric = "hub.parcels" });
        Assert.DoesNotContain(catalogue.Series.SelectMany(s => s.Labels.Keys), key => key == "host_arch");
    }

    [Fact]
    public async Task A_body_that_is_not_protobuf_is_refused_with_400_naming_the_message()
    {
        await using var server = new TestServer();
        using var http = server.CreateHttpClient();
        using var content = new ByteArrayContent([0x0A, 0xFF, 0xFF]);
        content.Headers.ContentType = new System.Net.Http.Headers.MediaTypeHeaderValue("application/x-protobuf");

        using var response = await http.PostAsync("/v1/metrics", content);

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        var status = Google.Rpc.Status.Parser.ParseFrom(await response.Content.ReadAsByteArrayAsync());
        Assert.Equal((int)StatusCode.InvalidArgument, status.Code);
        Assert.Contains(nameof(ExportMetricsServiceRequest), status.Message, StringComparison.Ordinal);
    }

    private static Metric CumulativeSum(string name, params (ulong Start, ulong Time, long Value)[] points)
    {
        var sum = new Sum { AggregationTemporality = AggregationTemporality.Cumulative, IsMonotonic = true };
        foreach (var (start, time, value) in points)
        {
            sum.DataPoints.Add(new NumberDataPoint { StartTimeUnixNano = start, TimeUnixNano = time, AsInt = value });
        }

        return new Metric { Name = name, Sum = sum };
    }

    private static Metric ExponentialMetric(string name, ExponentialHistogramDataPoint point) => ExponentialMetric(name, AggregationTemporality.Delta, point);

    private static Metric ExponentialMetric(string name, AggregationTemporality temporality, params ExponentialHistogramDataPoint[] points) =>
        new() { Name = name, ExponentialHistogram = new ExponentialHistogram { AggregationTemporality = temporality, DataPoints = { points } } };

    private static ExponentialHistogramDataPoint Exponential(int scale, int offset, ulong[] counts, double min, double max, double sum) => new()
    {
        TimeUnixNano = Now,
        Scale = scale,
        Count = (ulong)counts.Sum(c => (long)c),
        Sum = sum,
        Min = min,
        Max = max,
        Positive = new ExponentialHistogramDataPoint.Types.Buckets { Offset = offset, BucketCounts = { counts } },
    };
}
