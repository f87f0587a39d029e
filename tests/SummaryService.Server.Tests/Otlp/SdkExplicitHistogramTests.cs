using System.Diagnostics.Metrics;
using Grpc.Net.Client;
using MathNet.Numerics.Statistics;
using OpenTelemetry.Exporter;
using OpenTelemetry.Metrics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.EndToEnd;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.Otlp;

/// <summary>
/// The real OpenTelemetry .NET SDK with its default histogram aggregation (explicit buckets) sends
/// to the real server process on loopback: totals exact, every quantile interval holds the true
/// quantile of the recorded values and is the edges of the bucket that holds it.
/// </summary>
[Collection(nameof(EndToEndTests))]
public sealed class SdkExplicitHistogramTests
{
    // The default explicit bucket boundaries of the OpenTelemetry metrics SDK specification
    // ("Explicit Bucket Histogram Aggregation"), which the .NET SDK uses for a histogram without
    // advice or a view (from memory; the assertions below fail if the SDK sent other edges).
    private static readonly double[] DefaultBounds = [0, 5, 10, 25, 50, 75, 100, 250, 500, 750, 1000, 2500, 5000, 7500, 10000];

    private static readonly double[] Quantiles = [0, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999, 1];

    [Theory]
    [InlineData(OtlpExportProtocol.Grpc, MetricReaderTemporalityPreference.Delta)]
    [InlineData(OtlpExportProtocol.HttpProtobuf, MetricReaderTemporalityPreference.Delta)]
    [InlineData(OtlpExportProtocol.Grpc, MetricReaderTemporalityPreference.Cumulative)]
    [InlineData(OtlpExportProtocol.HttpProtobuf, MetricReaderTemporalityPreference.Cumulative)]
    public async Task Default_histograms_give_exact_totals_and_quantiles_bounded_by_the_edges_of_their_bucket(OtlpExportProtocol protocol, MetricReaderTemporalityPreference temporality)
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        string prefix = $"sorter.edges.{protocol}.{temporality}".ToLowerInvariant();

        // Spread over most of the default buckets; multiples of 1/64 add up exactly in binary
        // floating point (IEEE 754) whatever the order, so the SDK's running sums (and, cumulative,
        // their differences) are exact.
        double[] weights = [.. Requests.Latencies(3000, seed: 24, mu: 4, sigma: 1.2).Select(w => Math.Round(w * 64) / 64).Order()];
        int third = weights.Length / 3;

        // Export by export: the middle third, then the lowest, then the highest, so that cumulative
        // differences have a new minimum, then a new maximum.
        double[][] rounds = [weights[third..(2 * third)], weights[..third], weights[(2 * third)..]];
        using var meter = new Meter(prefix);
        var weight = meter.CreateHistogram<double>($"{prefix}.parcel.weight");
        using (MeterProvider provider = SdkExportTests.Provider(prefix, server, protocol, temporality, exponential: false))
        {
            var shuffle = new Random(24);
            foreach (double[] round in rounds)
            {
                foreach (double w in round.OrderBy(_ => shuffle.Next()))
                {
                    weight.Record(w, new KeyValuePair<string, object?>("dock", "east"));
                }

                Assert.True(provider.ForceFlush(10_000), "the exporter did not finish an export");
            }
        }

        using var channel = GrpcChannel.ForAddress(server.Address);
        var query = new Query.QueryClient(channel);
        var request = Requests.Summarize($"{prefix}.parcel.weight", ("dock", "east"));
        request.Quantiles.Clear();
        request.Quantiles.Add(Quantiles);
        var summary = (await query.SummarizeAsync(request)).Groups.Single().Summary;

        // Count, sum, min and max travel as the exporter's own totals (data model: Histogram count,
        // sum, min, max), so they match exactly.
        Assert.Equal((ulong)weights.Length, summary.Count);
        Assert.Equal(weights.Sum(), summary.Sum);
        Assert.Equal(weights[0], summary.Min);
        Assert.Equal(weights[^1], summary.Max);
        Assert.False(summary.HasVariance, "a histogram's totals say nothing of its spread, so variance must be absent");
        Assert.Equal(SketchForm.EdgeBuckets, summary.Form);
        foreach (QuantileEstimate q in summary.Quantiles)
        {
            // Reference: Hyndman & Fan (1996) definition 7 through MathNet.Numerics.
            double truth = SortedArrayStatistics.QuantileCustom(weights, q.Q, QuantileDefinition.R7);
            Assert.True(q.Low <= truth && truth <= q.High, $"q={q.Q}: true {truth} outside [{q.Low}, {q.High}]");

            // Definition 7 interpolates the order statistics of ranks ⌊h⌋ and ⌊h⌋ + 1, h = (n − 1)q + 1.
            // Where both lie in one bucket (data model: bucket i holds (bounds[i−1], bounds[i]]),
            // the interval is that bucket's edges cut to [min, max] (an end at min or max is named
            // after the range, the surer source); else it lies within their two buckets.
            double h = ((weights.Length - 1) * q.Q) + 1;
            int lower = BucketOf(weights[(int)Math.Floor(h) - 1]);
            int upper = BucketOf(weights[Math.Min((int)Math.Floor(h), weights.Length - 1)]);
            (double low, double high) = (Math.Max(LowEdge(lower), weights[0]), Math.Min(HighEdge(upper), weights[^1]));
            if (lower == upper && h > 1 && h < weights.Length)
            {
                Assert.Equal((low, high), (q.Low, q.High));
                Assert.Equal(low == weights[0] ? BoundSource.Range : BoundSource.Edges, q.LowSource);
                Assert.Equal(high == weights[^1] ? BoundSource.Range : BoundSource.Edges, q.HighSource);
            }
            else
            {
                Assert.True(low <= q.Low && q.High <= high, $"q={q.Q}: [{q.Low}, {q.High}] outside its buckets' [{low}, {high}]");
            }
        }
    }

    private static int BucketOf(double value)
    {
        int k = 0;
        while (k < DefaultBounds.Length && value > DefaultBounds[k])
        {
            k++;
        }

        return k;
    }

    private static double LowEdge(int bucket) => bucket == 0 ? double.NegativeInfinity : DefaultBounds[bucket - 1];

    private static double HighEdge(int bucket) => bucket == DefaultBounds.Length ? double.PositiveInfinity : DefaultBounds[bucket];
}
