using MathNet.Numerics.Statistics;
using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Tests;

/// <summary>Delivery across a server restart: nothing lost, nothing counted twice.</summary>
[Collection(nameof(ServerCollection))]
public sealed class RecorderRestartTests
{
    [Fact]
    public async Task Values_recorded_while_the_server_restarts_are_delivered_exactly_once()
    {
        await using LiveServer server = await LiveServer.StartAsync();
        double[] before = Measurements.Eighths(3000, seed: 11);
        double[] during = Measurements.Eighths(5000, seed: 12);
        double[] after = Measurements.Eighths(2000, seed: 13);

        await using (var recorder = new MeasurementRecorder(server.Client, Measurements.Quick))
        {
            RecordedSeries checkout = recorder.Series("northwind.checkout.latency", ("region", "north"));
            foreach (double value in before)
            {
                checkout.Record(value);
            }

            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
            await server.StopAsync();

            foreach (double value in during)
            {
                recorder.Record("northwind.checkout.latency", [("region", "north")], value);
            }

            // Let the recorder seal batches and fail to deliver them at least once.
            await WaitUntilAsync(() => recorder.Statistics.Reconnects >= 2, TimeSpan.FromSeconds(20));
            Assert.Equal(during.Length, recorder.Statistics.ValuesHeld);

            await server.RestartAsync();
            foreach (double value in after)
            {
                checkout.Record(value);
            }

            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(30));
            RecorderStatistics stats = recorder.Statistics;
            Assert.Equal(before.Length + during.Length + after.Length, stats.ValuesAcknowledged);
            Assert.Equal(0, stats.ValuesDropped + stats.ValuesRejected + stats.ValuesHeld);
        }

        double[] all = [.. before, .. during, .. after];
        Summary summary = await server.Client.SummaryOfAsync("northwind.checkout.latency");
        Assert.Equal((ulong)all.Length, summary.Count);

        // Plain arithmetic: eighths add exactly in binary floating point, so the sums must agree to the bit.
        double sum = 0;
        foreach (double value in all)
        {
            sum += value;
        }

        Assert.Equal(sum, summary.Sum);
        Assert.Equal(all.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
        Assert.Equal(all.Variance(), summary.Variance, 1e-6); // MathNet.Numerics
    }

    private static async Task WaitUntilAsync(Func<bool> condition, TimeSpan limit)
    {
        using var timeout = new CancellationTokenSource(limit);
        while (!condition())
        {
            await Task.Delay(20, timeout.Token);
        }
    }
}
