using Grpc.Core;
using MathNet.Numerics.Statistics;
using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Tests;

/// <summary>Every typed helper once against the real server, its figures checked against MathNet.Numerics over the same values.</summary>
[Collection(nameof(ServerCollection))]
public sealed class QueryHelperTests
{
    private const string Latency = "tallowbrook.shop.latency";
    private const string Status = "tallowbrook.api.status";

    [Fact]
    public async Task Every_query_and_admin_helper_answers_with_the_figures_of_the_recorded_values()
    {
        await using LiveServer server = await LiveServer.StartAsync();
        SummaryClient client = server.Client;

        // 150 values per group stay below the KLL capacity, so every figure is exact and can be compared exactly.
        double[] north = Measurements.Latencies(150, seed: 21);
        double[] south = [.. Measurements.Latencies(150, seed: 22).Select(v => v * 1.5)];
        int[] codes = [.. Enumerable.Repeat(200, 60), .. Enumerable.Repeat(404, 25), .. Enumerable.Repeat(500, 15)];
        DateTimeOffset start = StartOfMinute(DateTimeOffset.UtcNow.AddMinutes(-50));
        var clock = new SettableClock(start.AddMinutes(1));
        await using (var recorder = new MeasurementRecorder(client, Measurements.Quick with { TimeProvider = clock }))
        {
            foreach (double value in north)
            {
                recorder.Record(Latency, [("region", "north")], value);
            }

            await recorder.FlushAsync();
            clock.Now = start.AddMinutes(21);
            foreach (double value in south)
            {
                recorder.Record(Latency, [("region", "south")], value);
            }

            foreach (int code in codes)
            {
                recorder.Record(Status, code);
            }
        }

        SummaryWindow window = SummaryWindow.Between(start, start.AddMinutes(30));
        var options = new SummarizeOptions
        {
            Quantiles = [0.1, 0.5, 0.9],
            GroupBy = ["region"],
            Confidence = 0.95,
            RankOf = [20],
            MaxModes = 3,
            Histogram = new HistogramSpec { Edges = { 0, 10, 20, 40, 80, 1000 } },
        };
        SummarizeReply summarized = await client.SummarizeAsync(Selection.Of(Latency), window, options);
        Assert.Equal(["north", "south"], summarized.Groups.Select(g => g.Labels["region"]));
        CheckExactSummary(north, summarized.Groups[0].Summary);
        CheckExactSummary(south, summarized.Groups[1].Summary);

        Summary status = (await client.SummarizeAsync(Selection.Of(Status), SummaryWindow.Last(TimeSpan.FromHours(1)), new SummarizeOptions { MaxModes = 1 })).Groups[0].Summary;
        ModeEstimate mode = Assert.Single(status.Modes);
        Assert.Equal(200, mode.Value); // plain counting: 60 of the 100 codes are 200
        Assert.Equal(60ul, mode.Count);

        // Values keep their record time: north lands in the first 10-minute step, south in the third.
        TimelineReply timeline = await client.TimelineAsync(Selection.Of(Latency), window, TimeSpan.FromMinutes(10), new TimelineOptions { Quantiles = [0.5], GroupBy = ["region"] });
        Assert.Equal(3, timeline.Steps.Count);
        Assert.Equal("north", Assert.Single(timeline.Steps[0].Groups).Labels["region"]);
        Assert.Empty(timeline.Steps[1].Groups);
        GroupSummary third = Assert.Single(timeline.Steps[2].Groups);
        Assert.Equal("south", third.Labels["region"]);
        Assert.Equal(south.Median(), third.Summary.Quantiles[0].Value, 1e-9); // MathNet.Numerics

        var pushes = new List<SummarizeReply>();
        await foreach (SummarizeReply push in client.WatchAsync(Selection.Of(Latency), TimeSpan.FromHours(1), TimeSpan.FromMilliseconds(100), maxUpdates: 2))
        {
            pushes.Add(push);
        }

        Assert.Equal(2, pushes.Count);
        Assert.All(pushes, p => Assert.Equal(300ul, Assert.Single(p.Groups).Summary.Count));
        Assert.Equal(1, await CountUntilCancelledAsync(client));

        CompareReply compared = await client.CompareAsync(
            (Selection.Of(Latency, ("region", "north")), window),
            (Selection.Of(Latency, ("region", "south")), window),
            quantiles: [0.5, 0.9]);
        Assert.Equal(north.Median(), compared.Shifts[0].A, 1e-9); // MathNet.Numerics (every definition agrees at the median)
        Assert.Equal(south.Median(), compared.Shifts[0].B, 1e-9); // MathNet.Numerics
        Assert.Equal(R7(south, 0.9) - R7(north, 0.9), compared.Shifts[1].Delta, 1e-9); // MathNet.Numerics, Hyndman & Fan definition 7
        Assert.Equal(KolmogorovSmirnov(north, south), compared.KsDistance, 1e-12);

        // Split by region, south's rest is north alone: the same shifts Compare gave, south's p90 ratio first.
        StandoutReply split = await client.StandoutAsync(Selection.Of(Latency), "region", window, new StandoutOptions { Quantiles = [0.5, 0.9], Measure = StandoutMeasure.QuantileRatio });
        StandoutGroup southward = split.Ranked.Single(g => g.Value == "south");
        Assert.Equal(compared.Shifts, southward.Quantiles.Select(q => q.Shift));
        Assert.Equal(R7(south, 0.9) / R7(north, 0.9), southward.Quantiles[1].Ratio, 1e-9); // MathNet.Numerics, Hyndman & Fan definition 7
        Assert.Equal((150ul, 1u, 150ul, 1u), (southward.Count, southward.SeriesMerged, southward.RestCount, southward.RestSeriesMerged));

        IReadOnlyList<CatalogueEntry> listed = await client.CatalogueAsync(Latency);
        Assert.Equal([150ul, 150ul], listed.Select(s => s.Count));
        Assert.Equal(2, (await client.CatalogueAsync()).Count(s => s.Metric == Latency));
        HoldingsReply stats = await client.HoldingsAsync();
        Assert.Equal(3u, stats.Series);
        Assert.Equal("Wal", stats.Durability);
        WriteSnapshotReply snapshot = await client.WriteSnapshotAsync();
        Assert.True(snapshot.Generation >= 1);
        Assert.Equal(3u, snapshot.Series);

        Assert.Equal(100ul, await client.RemoveSeriesAsync(Status));
        var missing = await Assert.ThrowsAsync<RpcException>(() => client.RemoveSeriesAsync(Status));
        Assert.Equal(StatusCode.NotFound, missing.StatusCode);
        Assert.Contains(Status, missing.Status.Detail, StringComparison.Ordinal);
    }

    private static void CheckExactSummary(double[] values, Summary summary)
    {
        Assert.True(summary.Exact);
        Assert.Equal(0.95, summary.Confidence);
        Assert.Equal((ulong)values.Length, summary.Count);
        Assert.Equal(values.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
        Assert.Equal(values.Variance(), summary.Variance, 1e-7); // MathNet.Numerics (sample variance)
        Assert.Equal(values.Skewness(), summary.Skewness, 1e-9); // MathNet.Numerics (adjusted G1)
        Assert.Equal(values.Minimum(), summary.Min);
        Assert.Equal(values.Maximum(), summary.Max);
        double[] probabilities = [0.1, 0.5, 0.9];
        for (int i = 0; i < probabilities.Length; i++)
        {
            QuantileEstimate q = summary.Quantiles[i];
            Assert.Equal(R7(values, probabilities[i]), q.Value, 1e-9); // MathNet.Numerics, Hyndman & Fan definition 7
            Assert.Equal(q.Value, q.Low, 1e-9);
            Assert.Equal(q.Value, q.High, 1e-9);
        }

        // Plain counting over the same values.
        Assert.Equal(values.Count(v => v <= 20) / (double)values.Length, Assert.Single(summary.Ranks).Fraction, 1e-12);
        double[] edges = [0, 10, 20, 40, 80, 1000];
        for (int b = 0; b < edges.Length - 1; b++)
        {
            int inBin = values.Count(v => v >= edges[b] && (v < edges[b + 1] || (b == edges.Length - 2 && v <= edges[b + 1])));
            Assert.Equal(inBin, summary.Histogram.Bins[b].Count, 1e-9);
        }
    }

    private static double R7(double[] values, double p)
    {
        double[] sorted = [.. values.Order()];
        return SortedArrayStatistics.QuantileCustom(sorted, p, QuantileDefinition.R7);
    }

    /// <summary>Two-sample Kolmogorov–Smirnov statistic sup |F_a − F_b| by its definition (NIST/SEMATECH e-Handbook 1.3.5.16), over every sample point.</summary>
    private static double KolmogorovSmirnov(double[] a, double[] b)
    {
        double largest = 0;
        foreach (double x in a.Concat(b))
        {
            double fa = a.Count(v => v <= x) / (double)a.Length;
            double fb = b.Count(v => v <= x) / (double)b.Length;
            largest = Math.Max(largest, Math.Abs(fa - fb));
        }

        return largest;
    }

    /// <summary>A watch left open and cancelled after its first push ends quietly instead of throwing.</summary>
    private static async Task<int> CountUntilCancelledAsync(SummaryClient client)
    {
        using var cancel = new CancellationTokenSource(TimeSpan.FromSeconds(20));
        int received = 0;
        await foreach (SummarizeReply _ in client.WatchAsync(Selection.Of(Latency), TimeSpan.FromHours(1), TimeSpan.FromMilliseconds(100), cancellationToken: cancel.Token))
        {
            received++;
            await cancel.CancelAsync();
        }

        return received;
    }

    private static DateTimeOffset StartOfMinute(DateTimeOffset t) => new(t.Year, t.Month, t.Day, t.Hour, t.Minute, 0, TimeSpan.Zero);
}
