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
            RecordedSeries checkout = recorder.Series("tallowbrook.checkout.latency", ("region", "north"));
            foreach (double value in before)
            {
                checkout.Record(value);
            }

            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
            await server.StopAsync();

            foreach (double value in during)
            {
                recorder.Record("tallowbrook.checkout.latency", [("region", "north")], value);
            }

            // Let the recorder seal batches and fail to deliver them at least once.
            await Condition.WaitUntilAsync(() => recorder.Statistics.Reconnects >= 2, TimeSpan.FromSeconds(20));
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
        Summary summary = await server.Client.SummaryOfAsync("tallowbrook.checkout.latency");
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

    [Fact]
    public async Task A_server_stopping_while_the_recorder_sends_refuses_nothing_and_loses_nothing()
    {
        await using LiveServer server = await LiveServer.StartAsync();
        const int Values = 400_000; // bound on the recording loop; the stop comes part way through
        double[] values = Measurements.Eighths(Values, seed: 16);
        await using (var recorder = new MeasurementRecorder(server.Client, Measurements.Quick with { BufferCapacity = 2 * Values }))
        {
            RecordedSeries depth = recorder.Series("tallowbrook.queue.depth", ("lane", "east"));
            Task stopping = Task.CompletedTask;
            for (int i = 0; i < values.Length; i++)
            {
                depth.Record(values[i]);
                if (i == Values / 4)
                {
                    // The stream is busy: batches are in flight when the server begins to stop.
                    stopping = server.StopAsync();
                }

                if (i % 1000 == 0)
                {
                    await Task.Yield();
                }
            }

            await stopping;
            await server.RestartAsync();
            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(60));
            RecorderStatistics stats = recorder.Statistics;

            // Batches the stopping server answered "Unavailable" were sent again, not given up.
            Assert.Equal(0, stats.ValuesRejected + stats.BatchesRejected + stats.ValuesDropped + stats.ValuesHeld);
            Assert.Equal(Values, stats.ValuesAcknowledged);
        }

        Summary summary = await server.Client.SummaryOfAsync("tallowbrook.queue.depth");
        Assert.Equal((ulong)Values, summary.Count);
        Assert.Equal(values.Sum(), summary.Sum); // plain arithmetic; eighths add exactly
    }

    [Fact]
    public async Task Batches_applied_but_never_acknowledged_are_resent_and_counted_once()
    {
        await using LiveServer server = await LiveServer.StartAsync();
        await using var proxy = new ReplyCuttingProxy(server.Port);
        using var viaProxy = new SummaryClient(new SummaryClientOptions { Address = proxy.Address });
        double[] first = Measurements.Eighths(500, seed: 14);
        double[] unheard = Measurements.Eighths(1500, seed: 15);

        await using (var recorder = new MeasurementRecorder(viaProxy, Measurements.Quick))
        {
            foreach (double value in first)
            {
                recorder.Record("tallowbrook.cart.size", value);
            }

            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
            proxy.SwallowReplies();
            foreach (double value in unheard)
            {
                recorder.Record("tallowbrook.cart.size", value);
            }

            // The server applies the batches (asked directly, not through the proxy) while the recorder hears nothing.
            await Condition.WaitUntilAsync(async () => (await server.Client.SummaryOfAsync("tallowbrook.cart.size")).Count == 2000, TimeSpan.FromSeconds(20));
            Assert.Equal(unheard.Length, recorder.Statistics.ValuesHeld);

            proxy.CutAndHeal();
            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(30));
            RecorderStatistics stats = recorder.Statistics;
            Assert.True(stats.DuplicateBatches >= 1, $"expected the resent batches to be answered as duplicates; {stats}");
            Assert.True(stats.Reconnects >= 1);
            Assert.Equal(2000, stats.ValuesAcknowledged);
        }

        double[] all = [.. first, .. unheard];
        Summary summary = await server.Client.SummaryOfAsync("tallowbrook.cart.size");
        Assert.Equal(2000ul, summary.Count);
        Assert.Equal(all.Sum(), summary.Sum); // plain arithmetic; eighths add exactly
    }
}
