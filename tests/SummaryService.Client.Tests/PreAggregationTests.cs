using MathNet.Numerics.Statistics;
using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Tests;

/// <summary>Client-side sketches uploaded with PushSketch: exact counts and moments, quantiles inside their reported intervals.</summary>
[Collection(nameof(ServerCollection))]
public sealed class PreAggregationTests
{
    [Fact]
    public async Task Sketch_uploads_deliver_counts_exactly_and_quantiles_within_the_reported_bound()
    {
        await using LiveServer server = await LiveServer.StartAsync();

        // Enough values that every interval's sketch compacts, so the quantiles are approximate.
        double[] values = Measurements.Latencies(300_000, seed: 31);
        var options = Measurements.Quick with { Form = UploadForm.Sketches, FlushInterval = TimeSpan.FromMilliseconds(500), BufferCapacity = 400_000 };
        long uploads;
        await using (var recorder = new MeasurementRecorder(server.Client, options))
        {
            RecordedSeries series = recorder.Series("tallowbrook.ads.latency", ("region", "west"));
            foreach (double value in values)
            {
                series.Record(value);
            }

            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(30));
            uploads = recorder.Statistics.BatchesAcknowledged;
            Assert.Equal(values.Length, recorder.Statistics.ValuesAcknowledged);
        }

        // One sketch per series and half-second interval: a handful of uploads, where raw values would
        // have needed at least 300,000 / 4096 = 74 batches (40 would take 20 s of recording).
        Assert.InRange(uploads, 1, 40);
        double[] probabilities = [0.01, 0.25, 0.5, 0.9, 0.99];
        Summary summary = await server.Client.SummaryOfAsync("tallowbrook.ads.latency", new SummarizeOptions { Quantiles = probabilities, Confidence = 0.999 });
        Assert.Equal((ulong)values.Length, summary.Count);
        Assert.False(summary.Exact);
        Assert.Equal(values.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
        Assert.Equal(values.Variance(), summary.Variance, values.Variance() * 1e-9); // MathNet.Numerics
        Assert.Equal(values.Minimum(), summary.Min);
        Assert.Equal(values.Maximum(), summary.Max);

        double[] sorted = [.. values.Order()];
        for (int i = 0; i < probabilities.Length; i++)
        {
            // The sample quantile (MathNet.Numerics, Hyndman & Fan definition 7) must lie in the server's value
            // interval; at 99.9% confidence per figure a miss among five would be a real fault, not bad luck.
            double truth = SortedArrayStatistics.QuantileCustom(sorted, probabilities[i], QuantileDefinition.R7);
            QuantileEstimate q = summary.Quantiles[i];
            Assert.InRange(truth, q.Low, q.High);
            Assert.True(q.RankError > 0);
        }
    }
}
