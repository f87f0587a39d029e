using Grpc.Core;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Contract.Otlp.Common;
using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using static SummaryService.Server.Tests.Otlp.OtlpExports;

namespace SummaryService.Server.Tests.Otlp;

/// <summary>
/// Hand-built explicit-bounds histogram exports against the OpenTelemetry data model
/// (reference/otlp-metrics.md: bucket i holds (bounds[i−1], bounds[i]], len(bounds) + 1 buckets).
/// </summary>
public sealed class ExplicitHistogramRulesTests
{
    [Fact]
    public async Task A_delta_point_is_kept_with_exact_totals_and_quantiles_bounded_by_the_edges_of_their_bucket()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);

        // {1, 4, 6, 7, 9, 20}: (0, 5] holds 2, (5, 10] 3, (10, 25] 1.
        var reply = await client.ExportAsync(Request(Histogram("hub.wait", AggregationTemporality.Delta, Point(Now, [0, 5, 10, 25], [0, 2, 3, 1, 0], sum: 47, min: 1, max: 20))));

        Assert.Equal(0, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains("bounded by the edges", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        var request = Requests.Summarize("hub.wait");
        request.Quantiles.Clear();
        request.Quantiles.Add(0.5);
        var summary = (await server.Query.SummarizeAsync(request)).Groups.Single().Summary;
        Assert.Equal(6UL, summary.Count);
        Assert.Equal(47, summary.Sum);
        Assert.Equal(1, summary.Min);
        Assert.Equal(20, summary.Max);
        Assert.Equal(SketchForm.EdgeBuckets, summary.Form);

        // Hyndman & Fan definition 7: the median's ranks 3 and 4 both lie in (5, 10].
        QuantileEstimate median = summary.Quantiles.Single();
        Assert.Equal((5.0, 10.0), (median.Low, median.High));
        Assert.Equal(BoundSource.Edges, median.LowSource);
        Assert.Equal(BoundSource.Edges, median.HighSource);
    }

    [Fact]
    public async Task Cumulative_points_become_differences_with_resets_and_a_resent_point_is_rejected()
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);
        ulong start = Now;
        ulong restart = start + 40_000_000;
        double[] bounds = [0, 5, 10];

        // {2, 7}; then {2, 7} + {3, 12}; then {6} alone with the same start (a count went down: a
        // reset, data model "Temporality"), then {1} from a new start time: differences of
        // 2, 2, 1 and 1 values summing 9, 15, 6 and 1.
        var first = Point(start + 10_000_000, bounds, [0, 1, 1, 0], sum: 9, min: 2, max: 7, start);
        var second = Point(start + 20_000_000, bounds, [0, 2, 1, 1], sum: 24, min: 2, max: 12, start);
        var dropped = Point(start + 30_000_000, bounds, [0, 0, 1, 0], sum: 6, min: 6, max: 6, start);
        var restarted = Point(restart + 10_000_000, bounds, [0, 1, 0, 0], sum: 1, min: 1, max: 1, restart);
        Assert.Equal(0, (await client.ExportAsync(Request(Histogram("hub.wait", AggregationTemporality.Cumulative, first, second)))).PartialSuccess.RejectedDataPoints);
        var reply = await client.ExportAsync(Request(Histogram("hub.wait", AggregationTemporality.Cumulative, second.Clone(), dropped, restarted)));

        Assert.Equal(1, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains("already received", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        var summary = (await server.Query.SummarizeAsync(Requests.Summarize("hub.wait"))).Groups.Single().Summary;
        Assert.Equal(6UL, summary.Count);
        Assert.Equal(31, summary.Sum);
        Assert.Equal(1, summary.Min);
        Assert.Equal(12, summary.Max);
    }

    [Theory]
    [InlineData("nan-edge", "histogram.data_points[0].explicit_bounds[1] is NaN")]
    [InlineData("not-increasing", "histogram.data_points[0].explicit_bounds[2] is 5, not above")]
    [InlineData("counts-length", "histogram.data_points[0].bucket_counts has 3 counts for 3 edges")]
    [InlineData("counts-total", "histogram.data_points[0].count is 7 but bucket_counts add up to 6")]
    [InlineData("no-sum", "histogram.data_points[0].sum is absent")]
    [InlineData("max-outside", "histogram.data_points[0]: its min 1 and max 40 do not lie in the lowest and highest occupied buckets")]
    public async Task A_malformed_point_is_rejected_through_partial_success_naming_the_metric_and_field_and_changes_nothing(string damage, string message)
    {
        await using var server = new TestServer();
        var client = new MetricsService.MetricsServiceClient(server.Channel);
        HistogramDataPoint point = Point(Now, [0, 5, 10], [0, 2, 3, 1], sum: 47, min: 1, max: 20);
        switch (damage)
        {
            case "nan-edge": point.ExplicitBounds[1] = double.NaN; break;
            case "not-increasing": point.ExplicitBounds[2] = 5; break;
            case "counts-length": point.BucketCounts.RemoveAt(3); point.Count = 5; break;
            case "counts-total": point.Count = 7; break;
            case "no-sum": point.ClearSum(); break;
            case "max-outside": point.Max = 40; point.BucketCounts[3] = 0; point.BucketCounts[2] = 4; break;
        }

        var reply = await client.ExportAsync(Request(Gauge("hub.depth", 3), Histogram("hub.wait", AggregationTemporality.Delta, point)));

        // OTLP: rejected_data_points counts what the server did not accept, error_message says why.
        Assert.Equal(1, reply.PartialSuccess.RejectedDataPoints);
        Assert.Contains($"metric 'hub.wait' {message}", reply.PartialSuccess.ErrorMessage, StringComparison.Ordinal);
        var nothing = await Assert.ThrowsAsync<RpcException>(() => server.Query.SummarizeAsync(Requests.Summarize("hub.wait")).ResponseAsync);
        Assert.Equal(StatusCode.NotFound, nothing.StatusCode);
        Assert.Equal(1UL, (await server.Query.SummarizeAsync(Requests.Summarize("hub.depth"))).Groups.Single().Summary.Count);
    }

    private static Metric Histogram(string name, AggregationTemporality temporality, params HistogramDataPoint[] points) =>
        new() { Name = name, Histogram = new Contract.Otlp.Metrics.Histogram { AggregationTemporality = temporality, DataPoints = { points } } };

    private static HistogramDataPoint Point(ulong time, double[] bounds, ulong[] counts, double sum, double min, double max, ulong start = 0) => new()
    {
        StartTimeUnixNano = start,
        TimeUnixNano = time,
        Count = (ulong)counts.Sum(c => (long)c),
        Sum = sum,
        Min = min,
        Max = max,
        ExplicitBounds = { bounds },
        BucketCounts = { counts },
    };
}
