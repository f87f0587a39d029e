using Grpc.Core;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class SummarizeTests
{
    [Fact]
    public async Task Summary_of_pushed_values_matches_the_reference_library()
    {
        await using var server = new TestServer();
        double[] values = Requests.Latencies(150, seed: 11);
        await server.Ingest.PushAsync(Requests.Batch("shop.checkout.latency", values, ("region", "north")));

        var request = Requests.Summarize("shop.checkout.latency");
        request.RankOf.Add(25);
        request.Histogram = new Contract.V1.HistogramSpec { Edges = { 0, 20, 40, 1000 } };
        var reply = await server.Query.SummarizeAsync(request);

        var summary = Assert.Single(reply.Groups).Summary;
        Assert.True(summary.Exact);
        Assert.Equal(150ul, summary.Count);
        Assert.Equal(values.Mean(), summary.Mean, 1e-12); // MathNet.Numerics
        Assert.Equal(values.Variance(), summary.Variance, 1e-9); // MathNet.Numerics (sample variance)
        Assert.Equal(values.PopulationVariance(), summary.PopulationVariance, 1e-9); // MathNet.Numerics
        Assert.Equal(values.Skewness(), summary.Skewness, 1e-9); // MathNet.Numerics (adjusted G1)
        Assert.Equal(values.Kurtosis(), summary.Kurtosis, 1e-9); // MathNet.Numerics (bias-corrected excess G2)
        Assert.Equal(values.Minimum(), summary.Min);
        Assert.Equal(values.Maximum(), summary.Max);
        double[] sorted = values.OrderBy(v => v).ToArray();
        double[] defaults = [0, 0.25, 0.5, 0.75, 0.9, 0.99, 1];
        Assert.Equal(defaults, summary.Quantiles.Select(q => q.Q));
        foreach (var q in summary.Quantiles)
        {
            Assert.Equal(SortedArrayStatistics.QuantileCustom(sorted, q.Q, QuantileDefinition.R7), q.Value, 1e-12); // MathNet.Numerics, Hyndman & Fan definition 7
            Assert.Equal(q.Value, q.Low);
            Assert.Equal(q.Value, q.High);
        }

        Assert.Equal(values.Count(v => v <= 25) / 150.0, Assert.Single(summary.Ranks).Fraction, 1e-12); // brute force count (common practice)
        Assert.Equal([values.Count(v => v < 20), values.Count(v => v >= 20 && v < 40), values.Count(v => v >= 40)], summary.Histogram.Bins.Select(b => (int)b.Count)); // brute force count (common practice)
        Assert.Equal(sorted[^1] - sorted[0], summary.Range, 1e-12);
        Assert.NotNull(summary.FiveNumber);
        Assert.Equal(summary.Quantiles[2].Value, summary.FiveNumber.Median.Value);
    }

    [Fact]
    public async Task Undefined_statistics_are_absent_not_zero()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.single", [4.5]));
        var summary = Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.single"))).Groups).Summary;
        Assert.True(summary.HasMean);
        Assert.False(summary.HasVariance);
        Assert.False(summary.HasStddev);
        Assert.False(summary.HasSkewness);
        Assert.False(summary.HasKurtosis);
        Assert.False(summary.HasMeanLow);
    }

    [Fact]
    public async Task Group_by_and_label_matching_merge_the_right_series()
    {
        await using var server = new TestServer();
        var data = new Dictionary<(string Region, string Host), double[]>
        {
            [("north", "a")] = Requests.Latencies(100, 1),
            [("north", "b")] = Requests.Latencies(120, 2),
            [("south", "c")] = Requests.Latencies(80, 3, mu: 4),
        };
        foreach (var ((region, host), values) in data)
        {
            await server.Ingest.PushAsync(Requests.Batch("shop.api.latency", values, ("region", region), ("host", host)));
        }

        var grouped = Requests.Summarize("shop.api.latency");
        grouped.GroupBy.Add("region");
        var reply = await server.Query.SummarizeAsync(grouped);
        Assert.Equal(["north", "south"], reply.Groups.Select(g => g.Labels["region"]));
        double[] north = [.. data[("north", "a")], .. data[("north", "b")]];
        Assert.Equal(2u, reply.Groups[0].SeriesMerged);
        Assert.Equal((ulong)north.Length, reply.Groups[0].Summary.Count);
        Assert.Equal(north.Mean(), reply.Groups[0].Summary.Mean, 1e-9); // MathNet.Numerics
        Assert.Equal(data[("south", "c")].StandardDeviation(), reply.Groups[1].Summary.Stddev, 1e-9); // MathNet.Numerics

        var matched = await server.Query.SummarizeAsync(Requests.Summarize("shop.api.latency", ("region", "north"), ("host", "b")));
        Assert.Equal(data[("north", "b")].Median(), Assert.Single(matched.Groups).Summary.Quantiles[2].Value, 1e-12); // MathNet.Numerics (median is R7 at 0.5)
    }

    [Fact]
    public async Task A_range_window_selects_only_the_values_inside_its_covered_span()
    {
        await using var server = new TestServer();
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        double[] values = Requests.Latencies(360, 5);
        var batch = Requests.Batch("shop.partial", values);
        long[] times = Enumerable.Range(0, values.Length).Select(i => now - (3 * 3_600_000L) + (i * 30_000L)).ToArray();
        batch.ValueTimesUnixMs.AddRange(times);
        await server.Ingest.PushAsync(batch);

        var request = new SummarizeRequest { Selector = Requests.Selector("shop.partial"), Window = Requests.Range(now - (2 * 3_600_000L) + 5, now - 3_600_000L + 5) };
        var reply = await server.Query.SummarizeAsync(request);
        var covered = reply.Covered;
        double[] inside = values.Where((_, i) => times[i] >= covered.FromUnixMs && times[i] < covered.ToUnixMs).ToArray();
        Assert.InRange(inside.Length, 110, 130);
        var summary = Assert.Single(reply.Groups).Summary;
        Assert.Equal((ulong)inside.Length, summary.Count);
        Assert.Equal(inside.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
    }

    [Fact]
    public async Task Intervals_of_an_approximate_sketch_hold_the_exact_quantile()
    {
        await using var server = new TestServer();
        double[] values = Requests.Latencies(20_000, 21);
        await server.Ingest.PushAsync(Requests.Batch("shop.big", values));
        var summary = Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.big"))).Groups).Summary;
        Assert.False(summary.Exact);
        Assert.True(summary.RankError > 0);
        double[] sorted = values.OrderBy(v => v).ToArray();
        foreach (var q in summary.Quantiles)
        {
            double exact = SortedArrayStatistics.QuantileCustom(sorted, q.Q, QuantileDefinition.R7); // MathNet.Numerics, definition 7
            Assert.InRange(exact, q.Low, q.High);
        }
    }

    [Fact]
    public async Task A_selector_matching_nothing_is_not_found()
    {
        await using var server = new TestServer();
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(Requests.Summarize("shop.none")));
        Assert.Equal(StatusCode.NotFound, ex.StatusCode);
        Assert.Contains("shop.none", ex.Status.Detail, StringComparison.Ordinal);
    }
}
