using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

/// <summary>Query.Standout: every value of one label against the merge of all the others.</summary>
public sealed class StandoutTests
{
    private const long Hour = 3_600_000;

    [Fact]
    public async Task The_depot_with_the_slow_tail_comes_first_and_each_side_says_how_many_series_it_merged()
    {
        await using var server = new TestServer();
        // Twelve depots of one parcel-scan service, one of them with its slowest 5% taking twice as
        // long; two series carry no depot label and join every rest.
        for (int d = 0; d < 12; d++)
        {
            double[] values = Requests.Latencies(3000, 500 + d);
            double cut = values.Quantile(0.95); // MathNet.Numerics
            await server.Ingest.PushAsync(Requests.Batch("parcel.scan.latency", d == 7 ? values.Select(v => v > cut ? v * 2 : v) : values, ("depot", $"depot-{d:D2}")));
        }

        await server.Ingest.PushAsync(Requests.Batch("parcel.scan.latency", Requests.Latencies(500, 530), ("belt", "a")));
        await server.Ingest.PushAsync(Requests.Batch("parcel.scan.latency", Requests.Latencies(500, 531), ("belt", "b")));

        StandoutReply reply = await server.Query.StandoutAsync(new StandoutRequest
        {
            Selector = Requests.Selector("parcel.scan.latency"),
            SplitBy = "depot",
            Window = Requests.Last(TimeSpan.FromHours(1)),
            Measure = StandoutMeasure.QuantileRatio,
        });

        Assert.Equal(12, reply.Ranked.Count);
        Assert.Empty(reply.Unranked);
        Assert.Equal(2u, reply.UnsplitSeries);
        Assert.Equal(0.99, reply.MeasureQuantile); // the highest quantile compared, by default
        StandoutGroup first = reply.Ranked[0];
        Assert.Equal("depot-07", first.Value);
        Assert.True(first.Significant);
        Assert.All(reply.Ranked.Skip(1), g => Assert.False(g.Significant, g.ToString()));
        Assert.Equal(1u, first.SeriesMerged);
        Assert.Equal(13u, first.RestSeriesMerged); // eleven depots and the two unlabelled series
        Assert.Equal(3000ul, first.Count);
        Assert.Equal((11 * 3000ul) + 1000, first.RestCount);
        Assert.Equal([0.5, 0.9, 0.99], first.Quantiles.Select(q => q.Shift.Q));
        Assert.InRange(first.Quantiles[2].Ratio, 1.6, 2.2);
    }

    [Fact]
    public async Task With_two_groups_each_ones_verdicts_are_exactly_what_compare_says_against_the_other()
    {
        await using var server = new TestServer();
        // 150 values a side: the sketches hold them exactly, so both queries read the same values.
        await server.Ingest.PushAsync(Requests.Batch("parcel.weigh.latency", Requests.Latencies(150, 540), ("scale", "old")));
        await server.Ingest.PushAsync(Requests.Batch("parcel.weigh.latency", Requests.Latencies(150, 541, mu: 3.3), ("scale", "new")));
        Window window = Requests.Last(TimeSpan.FromHours(1));

        StandoutReply split = await server.Query.StandoutAsync(new StandoutRequest { Selector = Requests.Selector("parcel.weigh.latency"), SplitBy = "scale", Window = window, Quantiles = { 0.25, 0.5, 0.9 } });
        CompareReply compared = await server.Query.CompareAsync(new CompareRequest
        {
            A = new Side { Selector = Requests.Selector("parcel.weigh.latency", ("scale", "old")), Window = window },
            B = new Side { Selector = Requests.Selector("parcel.weigh.latency", ("scale", "new")), Window = window },
            Quantiles = { 0.25, 0.5, 0.9 },
        });

        StandoutGroup newer = split.Ranked.Single(g => g.Value == "new");
        Assert.Equal(compared.Shifts, newer.Quantiles.Select(q => q.Shift));
        Assert.Contains(compared.Shifts, s => s.Significant);
        Assert.Equal(compared.KsDistance, newer.Distance.Distance);
        Assert.Equal(compared.KsLow, newer.Distance.Low);
        Assert.Equal(compared.KsHigh, newer.Distance.High);
    }

    [Fact]
    public async Task An_earlier_window_ranks_the_depot_that_moved_while_the_rest_held_still()
    {
        await using var server = new TestServer();
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        now -= now % 60_000;
        for (int d = 0; d < 8; d++)
        {
            double[] before = Requests.Latencies(3000, 600 + d);
            double[] after = Requests.Latencies(3000, 700 + d);
            if (d == 3)
            {
                double cut = after.Quantile(0.95); // MathNet.Numerics
                after = [.. after.Select(v => v > cut ? v * 2 : v)];
            }

            await PushSpread(server, before, now - (2 * Hour), ("depot", $"depot-{d}"));
            await PushSpread(server, after, now - Hour, ("depot", $"depot-{d}"));
        }

        StandoutReply reply = await server.Query.StandoutAsync(new StandoutRequest
        {
            Selector = Requests.Selector("parcel.sort.latency"),
            SplitBy = "depot",
            Before = Requests.Range(now - (2 * Hour), now - Hour),
            Window = Requests.Range(now - Hour, now),
            Measure = StandoutMeasure.QuantileRatio,
        });

        StandoutGroup first = reply.Ranked[0];
        Assert.Equal("depot-3", first.Value);
        Assert.True(first.Significant);
        Assert.All(reply.Ranked.Skip(1), g => Assert.False(g.Significant));
        Assert.Equal(3000ul, first.Move.CountBefore);
        Assert.Equal(7u, first.Move.RestSeriesBefore);
        Assert.Equal(now - (2 * Hour), reply.CoveredBefore.FromUnixMs);
        Assert.Equal(now - Hour, reply.Covered.FromUnixMs);
    }

    [Theory]
    [InlineData("unknown-label", "split_by is 'colour', a label none of the 2 series matching parcel.v carries.")]
    [InlineData("empty-split", "split_by is empty")]
    [InlineData("reversed-window", "window.range from_unix_ms")]
    [InlineData("reversed-before", "before.range from_unix_ms")]
    [InlineData("negative-before", "before.last is -5s")]
    [InlineData("quantile-one", "quantiles[1] is 1;")]
    [InlineData("confidence-one", "confidence is 1;")]
    [InlineData("measure-quantile", "measure_quantile is 0.75, not one of the quantiles compared (0.5, 0.9, 0.99)")]
    [InlineData("unknown-measure", "measure is 9;")]
    public async Task Bad_requests_are_refused_naming_the_field_and_the_value(string kind, string mention)
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("parcel.v", [1, 2, 3], ("depot", "a")));
        await server.Ingest.PushAsync(Requests.Batch("parcel.v", [4, 5, 6], ("depot", "b")));
        var request = new StandoutRequest { Selector = Requests.Selector("parcel.v"), SplitBy = "depot", Window = Requests.Last(TimeSpan.FromHours(1)) };
        switch (kind)
        {
            case "unknown-label": request.SplitBy = "colour"; break;
            case "empty-split": request.SplitBy = ""; break;
            case "reversed-window": request.Window = Requests.Range(10, 10); break;
            case "reversed-before": request.Before = Requests.Range(20, 10); break;
            case "negative-before": request.Before = new Window { Last = Duration.FromTimeSpan(TimeSpan.FromSeconds(-5)) }; break;
            case "quantile-one": request.Quantiles.Add([0.5, 1]); break;
            case "confidence-one": request.Confidence = 1; break;
            case "measure-quantile": (request.Measure, request.MeasureQuantile) = (StandoutMeasure.QuantileShift, 0.75); break;
            default: request.Measure = (StandoutMeasure)9; break;
        }

        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.StandoutAsync(request));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains(mention, ex.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_metric_with_no_series_is_not_found()
    {
        await using var server = new TestServer();
        var request = new StandoutRequest { Selector = Requests.Selector("parcel.none"), SplitBy = "depot", Window = Requests.Last(TimeSpan.FromHours(1)) };
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.StandoutAsync(request));
        Assert.Equal(StatusCode.NotFound, ex.StatusCode);
        Assert.Contains("parcel.none", ex.Status.Detail, StringComparison.Ordinal);
    }

    private static async Task PushSpread(TestServer server, double[] values, long from, (string, string) label)
    {
        var batch = Requests.Batch("parcel.sort.latency", values, label);
        batch.ValueTimesUnixMs.AddRange(values.Select((_, i) => from + 1 + (i * (Hour - 2) / values.Length)));
        await server.Ingest.PushAsync(batch);
    }
}
