using Grpc.Core;
using Microsoft.Extensions.Options;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

/// <summary>
/// A summary says which bound held each interval and which parts it was read from, lists density
/// peaks as regions on continuous data, and gives a histogram whose bins are the log buckets with
/// exact counts; the log-bucket scale is a validated setting.
/// </summary>
public sealed class BoundsAndModesTests
{
    [Fact]
    public async Task Quantile_intervals_name_their_bounds_and_the_relative_bound_in_force()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.pay.latency", Requests.Latencies(50_000, 81)));
        var request = Requests.Summarize("shop.pay.latency");
        request.Quantiles.Add([0.5, 0.99, 0.999]);

        Summary summary = Assert.Single((await server.Query.SummarizeAsync(request)).Groups).Summary;

        Assert.Equal(SketchForm.Full, summary.Form);
        Assert.Equal(6, summary.BucketScale);

        // Data model, "Exponential Scale": base = 2^(2^−6); the bound is (base − 1)/(base + 1).
        double b = Math.Pow(2, 1.0 / 64);
        Assert.Equal((b - 1) / (b + 1), summary.RelativeError, 12);
        Assert.All(summary.Quantiles, q => Assert.Equal(BoundSource.LogBuckets, q.HighSource));
        Assert.All(summary.Quantiles, q => Assert.True((q.High - q.Low) / 2 <= 0.0055 * q.Value, $"q{q.Q}: [{q.Low}, {q.High}]"));
        Assert.NotEqual(BoundSource.Unspecified, summary.MadLowSource);
    }

    [Fact]
    public async Task A_log_bucket_histogram_has_exact_counts_that_add_up_to_the_count()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.pay.latency", Requests.Latencies(20_000, 82)));
        var request = Requests.Summarize("shop.pay.latency");
        request.Histogram = new HistogramSpec { LogBuckets = true, BinCount = 30 };

        Summary summary = Assert.Single((await server.Query.SummarizeAsync(request)).Groups).Summary;

        var bins = summary.Histogram.Bins;
        Assert.InRange(bins.Count, 2, 30);
        Assert.All(bins, bin => Assert.Equal((bin.Count, bin.Count), (bin.CountLow, bin.CountHigh)));
        Assert.All(bins, bin => Assert.Equal(BoundSource.LogBuckets, bin.LowSource));
        Assert.Equal(20_000, bins.Sum(bin => bin.Count));
        Assert.Equal(summary.Min, bins[0].Lower);
        Assert.Equal(summary.Max, bins[^1].Upper);

        // Log-scaled: every bin spans the same ratio of its upper to its lower edge (inner bins).
        double ratio = bins[1].Upper / bins[1].Lower;
        Assert.All(bins.Skip(1).SkipLast(1), bin => Assert.Equal(ratio, bin.Upper / bin.Lower, 9));
    }

    [Fact]
    public async Task Continuous_data_lists_its_density_peaks_as_regions_with_their_shares()
    {
        await using var server = new TestServer();
        double[] fast = Requests.Latencies(14_000, 83, mu: Math.Log(6), sigma: 0.3);
        double[] slow = Requests.Latencies(6_000, 84, mu: Math.Log(60), sigma: 0.3);
        await server.Ingest.PushAsync(Requests.Batch("shop.cache.latency", [.. fast, .. slow]));

        Summary summary = Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.cache.latency"))).Groups).Summary;

        Assert.Equal(2, summary.Modes.Count);
        Assert.All(summary.Modes, m => Assert.Equal(ModeKind.Region, m.Kind));
        Assert.InRange(summary.Modes[0].Value, summary.Modes[0].Low, summary.Modes[0].High);
        Assert.InRange(summary.Modes[0].Value, 4, 8);
        Assert.InRange(summary.Modes[1].Value, 40, 80);
        Assert.InRange(summary.Modes[0].Share, 0.67, 0.73);
    }

    [Fact]
    public async Task Log_bucket_bins_with_edges_are_refused_naming_the_field()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.pay.latency", [1, 2, 3]));
        var request = Requests.Summarize("shop.pay.latency");
        request.Histogram = new HistogramSpec { LogBuckets = true, Edges = { 1, 2 } };

        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(request));

        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("histogram.log_buckets", ex.Status.Detail, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("Store:LogScale", "9")]
    [InlineData("Store:LogScale", "-1")]
    [InlineData("Store:LogMaxBuckets", "4")]
    public async Task A_log_bucket_setting_out_of_range_stops_the_server_naming_it(string setting, string value)
    {
        var ex = await Assert.ThrowsAsync<OptionsValidationException>(async () =>
        {
            await using var server = new TestServer(new Dictionary<string, string?> { [setting] = value });
            await server.Ingest.PushAsync(Requests.Batch("shop.pay.latency", [1]));
        });

        Assert.Contains(setting, ex.Message, StringComparison.Ordinal);
    }
}
