using MathNet.Numerics.Statistics;
using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Tests;

/// <summary>Disposal's final flush, with values recorded from several threads at once.</summary>
[Collection(nameof(ServerCollection))]
public sealed class RecorderDisposalTests
{
    private static readonly string[] Regions = ["north", "south", "east"];

    [Fact]
    public async Task Dispose_delivers_every_value_recorded_concurrently_before_it()
    {
        await using LiveServer server = await LiveServer.StartAsync();

        // An hour-long interval: nothing leaves before disposal except full 4096-value buffers.
        var options = new MeasurementRecorderOptions { FlushInterval = TimeSpan.FromHours(1), DisposeTimeout = TimeSpan.FromSeconds(20) };
        double[][] perThread = [.. Enumerable.Range(0, 4).Select(t => Measurements.Eighths(9000, seed: 100 + t))];
        var recorder = new MeasurementRecorder(server.Client, options);
        // Two threads write into each series at once, so buffers fill and are sealed under contention.
        Task[] producers = [.. perThread.Select((values, t) => Task.Run(() =>
        {
            string pod = "p" + (t % 2);
            for (int i = 0; i < values.Length; i++)
            {
                recorder.Record("tallowbrook.search.latency", [("region", Regions[i % 3]), ("pod", pod)], values[i]);
            }
        }))];
        await Task.WhenAll(producers);
        await recorder.DisposeAsync();

        RecorderStatistics stats = recorder.Statistics;
        Assert.Equal(36_000, stats.ValuesAcknowledged);
        Assert.Equal(0, stats.ValuesAbandoned + stats.ValuesDropped + stats.ValuesHeld);

        var reply = await server.Client.SummarizeAsync(Selection.Of("tallowbrook.search.latency"), SummaryWindow.Last(TimeSpan.FromHours(1)), new SummarizeOptions { GroupBy = ["region"] });
        Assert.Equal(Regions.Order(StringComparer.Ordinal), reply.Groups.Select(g => g.Labels["region"]));
        foreach (GroupSummary group in reply.Groups)
        {
            int r = Array.IndexOf(Regions, group.Labels["region"]);
            double[] expected = [.. perThread.SelectMany(values => values.Where((_, i) => i % 3 == r))];
            Assert.Equal((ulong)expected.Length, group.Summary.Count);
            Assert.Equal(2u, group.SeriesMerged);
            Assert.Equal(expected.Sum(), group.Summary.Sum); // plain arithmetic; eighths add exactly
            Assert.Equal(expected.Mean(), group.Summary.Mean, 1e-9); // MathNet.Numerics
        }
    }
}
