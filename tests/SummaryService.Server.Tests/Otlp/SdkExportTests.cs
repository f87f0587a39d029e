using System.Diagnostics.Metrics;
using Grpc.Net.Client;
using MathNet.Numerics.Statistics;
using OpenTelemetry;
using OpenTelemetry.Exporter;
using OpenTelemetry.Metrics;
using OpenTelemetry.Resources;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.EndToEnd;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.Otlp;

/// <summary>
/// The real OpenTelemetry .NET SDK and its OTLP exporter, in this test process, send to the real
/// server process on loopback; the summaries read back must match what the test recorded.
/// </summary>
[Collection(nameof(EndToEndTests))]
public sealed class SdkExportTests
{
    [Theory]
    [InlineData(OtlpExportProtocol.Grpc)]
    [InlineData(OtlpExportProtocol.HttpProtobuf)]
    public async Task Delta_exports_give_exact_totals_and_quantile_intervals_that_hold_the_recorded_values(OtlpExportProtocol protocol)
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        string prefix = $"sorter.{protocol}".ToLowerInvariant();
        double[] weights = Requests.Latencies(3000, seed: 22);
        using var meter = new Meter(prefix);
        var weight = meter.CreateHistogram<double>($"{prefix}.parcel.weight");
        var scans = meter.CreateCounter<long>($"{prefix}.parcel.scans");
        var temperature = meter.CreateGauge<double>($"{prefix}.dock.temperature");
        using (MeterProvider provider = Provider(prefix, server, protocol, MetricReaderTemporalityPreference.Delta))
        {
            foreach (double w in weights)
            {
                weight.Record(w, new KeyValuePair<string, object?>("dock", "north"));
            }

            scans.Add(40);
            temperature.Record(4.5);
            Assert.True(provider.ForceFlush(10_000), "the exporter did not finish its first export");
            scans.Add(2);
            Assert.True(provider.ForceFlush(10_000), "the exporter did not finish its second export");
        }

        using var channel = GrpcChannel.ForAddress(server.Address);
        var query = new Query.QueryClient(channel);
        var histogram = (await query.SummarizeAsync(Requests.Summarize($"{prefix}.parcel.weight", ("dock", "north"), ("service_name", "otterbyte-sorter")))).Groups.Single().Summary;

        // Count, sum, min and max travel as the exporter's own totals, so they match exactly
        // (OpenTelemetry metrics data model: ExponentialHistogram count, sum, min, max).
        Assert.Equal((ulong)weights.Length, histogram.Count);
        Assert.Equal(weights.Sum(), histogram.Sum, 1e-9 * weights.Sum());
        Assert.Equal(weights.Min(), histogram.Min);
        Assert.Equal(weights.Max(), histogram.Max);
        Assert.False(histogram.HasVariance, "a histogram's totals say nothing of its spread, so variance must be absent");
        double[] sorted = weights.Order().ToArray();
        foreach (QuantileEstimate q in histogram.Quantiles)
        {
            // Reference: Hyndman & Fan (1996) definition 7 through MathNet.Numerics.
            double truth = SortedArrayStatistics.QuantileCustom(sorted, q.Q, QuantileDefinition.R7);
            Assert.True(q.Low <= truth && truth <= q.High, $"q={q.Q}: true {truth} outside [{q.Low}, {q.High}]");
        }

        // Delta sums: each export's increase is one value (the data model's delta temporality).
        var counted = (await query.SummarizeAsync(Requests.Summarize($"{prefix}.parcel.scans"))).Groups.Single().Summary;
        Assert.Equal(42, counted.Sum);
        var gauge = (await query.SummarizeAsync(Requests.Summarize($"{prefix}.dock.temperature"))).Groups.Single().Summary;
        Assert.Equal(4.5, gauge.Max);
        Assert.Equal(4.5, gauge.Min);
    }

    [Fact]
    public async Task Cumulative_counters_become_their_increases()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        const string prefix = "sorter.cumulative";
        using var meter = new Meter(prefix);
        var scans = meter.CreateCounter<long>($"{prefix}.parcel.scans");
        using (MeterProvider provider = Provider(prefix, server, OtlpExportProtocol.HttpProtobuf, MetricReaderTemporalityPreference.Cumulative))
        {
            foreach (int step in new[] { 5, 7, 11 })
            {
                scans.Add(step);
                Assert.True(provider.ForceFlush(10_000), "the exporter did not finish an export");
            }
        }

        using var channel = GrpcChannel.ForAddress(server.Address);
        var query = new Query.QueryClient(channel);

        // Cumulative points 5, 12, 23 (the stream began after the server started, so its first
        // point counts whole): the increases are 5, 7 and 11 (data model: cumulative temporality),
        // and the provider's final export at disposal repeats 23, an increase of 0.
        var counted = (await query.SummarizeAsync(Requests.Summarize($"{prefix}.parcel.scans"))).Groups.Single().Summary;
        Assert.Equal(23, counted.Sum);
        Assert.Equal(11, counted.Max);
        Assert.Equal(4UL, counted.Count);
    }

    [Theory]
    [InlineData(OtlpExportProtocol.Grpc)]
    [InlineData(OtlpExportProtocol.HttpProtobuf)]
    public async Task Cumulative_exponential_histograms_become_their_differences_with_exact_totals_and_honest_extremes(OtlpExportProtocol protocol)
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        string prefix = $"sorter.cumulative.{protocol}".ToLowerInvariant();

        // Multiples of 1/64 add up exactly in binary floating point (IEEE 754), whatever the order,
        // so the exporter's running sums and their differences are exact too.
        double[] weights = [.. Requests.Latencies(3000, seed: 23).Select(w => Math.Round(w * 64) / 64).Order()];
        int third = weights.Length / 3;

        // Export by export: the middle third, then the lowest (a new minimum), then the highest (a
        // new maximum), each export's scale no finer than the last as the range grows.
        double[][] rounds = [weights[third..(2 * third)], weights[..third], weights[(2 * third)..]];
        using var meter = new Meter(prefix);
        var weight = meter.CreateHistogram<double>($"{prefix}.parcel.weight");
        using (MeterProvider provider = Provider(prefix, server, protocol, MetricReaderTemporalityPreference.Cumulative))
        {
            var shuffle = new Random(23);
            foreach (double[] round in rounds)
            {
                foreach (double w in round.OrderBy(_ => shuffle.Next()))
                {
                    weight.Record(w, new KeyValuePair<string, object?>("dock", "south"));
                }

                Assert.True(provider.ForceFlush(10_000), "the exporter did not finish an export");
            }
        }

        using var channel = GrpcChannel.ForAddress(server.Address);
        var query = new Query.QueryClient(channel);
        var histogram = (await query.SummarizeAsync(Requests.Summarize($"{prefix}.parcel.weight", ("dock", "south")))).Groups.Single().Summary;

        // Data model, cumulative temporality: the differences of the points add up to what was recorded.
        Assert.Equal((ulong)weights.Length, histogram.Count);
        Assert.Equal(weights.Sum(), histogram.Sum);
        Assert.False(histogram.HasVariance, "a histogram's totals say nothing of its spread, so variance must be absent");

        // The second export's minimum and the third's maximum were new, so exact; the other ends of
        // those differences are only bounded, which the summary says, though here the exact ends win.
        Assert.True(histogram.ExtremesBounded, "some differences had only bounded extremes");
        Assert.Equal(weights[0], histogram.Min);
        Assert.Equal(weights[^1], histogram.Max);
        foreach (QuantileEstimate q in histogram.Quantiles)
        {
            // Reference: Hyndman & Fan (1996) definition 7 through MathNet.Numerics.
            double truth = SortedArrayStatistics.QuantileCustom(weights, q.Q, QuantileDefinition.R7);
            Assert.True(q.Low <= truth && truth <= q.High, $"q={q.Q}: true {truth} outside [{q.Low}, {q.High}]");
        }
    }

    /// <summary>A meter provider exporting to the server; histograms exponential unless <paramref name="exponential"/> is false (the SDK's default explicit buckets).</summary>
    internal static MeterProvider Provider(string meter, ServerProcess server, OtlpExportProtocol protocol, MetricReaderTemporalityPreference temporality, bool exponential = true) =>
        Sdk.CreateMeterProviderBuilder()
            .ConfigureResource(resource => resource.AddService("otterbyte-sorter"))
            .AddMeter(meter)
            .AddView(instrument => exponential && instrument.GetType().Name.StartsWith("Histogram", StringComparison.Ordinal) ? new Base2ExponentialBucketHistogramConfiguration() : null)
            .AddOtlpExporter((exporter, reader) =>
            {
                exporter.Protocol = protocol;
                exporter.Endpoint = protocol == OtlpExportProtocol.Grpc ? server.Address : new Uri(server.HttpAddress, "/v1/metrics");
                reader.TemporalityPreference = temporality;
                reader.PeriodicExportingMetricReaderOptions.ExportIntervalMilliseconds = 3_600_000;
            })
            .Build();
}
