using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;

namespace SummaryService.Client.Tests;

/// <summary>A batch the server refuses with an error reply is counted and announced once, and the stream carries on.</summary>
[Collection(nameof(ServerCollection))]
public sealed class RecorderRejectionTests
{
    [Fact]
    public async Task A_refused_batch_is_counted_and_announced_once_while_other_series_are_delivered()
    {
        await using LiveServer server = await LiveServer.StartAsync();
        var rejections = new List<RejectedBatchEventArgs>();
        var log = new ListLogger<MeasurementRecorder>();
        await using (var recorder = new MeasurementRecorder(server.Client, Measurements.Quick, log))
        {
            recorder.BatchRejected += (_, e) =>
            {
                lock (rejections)
                {
                    rejections.Add(e);
                }
            };

            // A metric name must start with a letter; the server refuses the batch naming the field.
            recorder.Record("7-tallowbrook.bad", [("depot", "quay")], 1.5);
            recorder.Record("7-tallowbrook.bad", [("depot", "quay")], 2.5);
            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
            for (int i = 0; i < 10; i++)
            {
                recorder.Record("tallowbrook.parcel.weight", [("depot", "harbour")], i + 0.5);
            }

            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
            RecorderStatistics stats = recorder.Statistics;
            Assert.Equal(1, stats.BatchesRejected);
            Assert.Equal(2, stats.ValuesRejected);
            Assert.Equal(10, stats.ValuesAcknowledged);
            Assert.Equal(0, stats.Reconnects);
        }

        RejectedBatchEventArgs rejection = Assert.Single(rejections);
        Assert.Equal("InvalidArgument", rejection.ErrorCode);
        Assert.Equal("metric", rejection.ErrorField);
        Assert.Contains("7-tallowbrook.bad", rejection.Error, StringComparison.Ordinal);
        Assert.Equal(2, rejection.Values);
        Assert.Contains(log.Messages, m => System.Text.RegularExpressions.Regex.IsMatch(m, @"^SummaryService refused batch \d+ of 7-tallowbrook\.bad · depot=quay \(2 values\): InvalidArgument "));
        Assert.Equal(10ul, (await server.Client.SummaryOfAsync("tallowbrook.parcel.weight")).Count);
        Assert.DoesNotContain(await server.Client.CatalogueAsync(), s => s.Metric == "7-tallowbrook.bad");
    }
}
