using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class TimelineAndWatchTests
{
    [Fact]
    public async Task Timeline_gives_one_summary_per_step_with_that_steps_values()
    {
        await using var server = new TestServer();
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        long start = now - (now % 60_000) - (5 * 60_000);
        double[] values = Requests.Latencies(300, 41);
        long[] times = values.Select((_, i) => start + (i * 1_000L)).ToArray();
        var batch = Requests.Batch("shop.plot", values);
        batch.ValueTimesUnixMs.AddRange(times);
        await server.Ingest.PushAsync(batch);

        var reply = await server.Query.TimelineAsync(new TimelineRequest { Selector = Requests.Selector("shop.plot"), Window = Requests.Range(start, start + (5 * 60_000)), Step = Duration.FromTimeSpan(TimeSpan.FromMinutes(1)) });
        Assert.Equal(5, reply.Steps.Count);
        for (int p = 0; p < 5; p++)
        {
            var step = reply.Steps[p];
            double[] inside = values.Where((_, i) => times[i] >= step.Step.FromUnixMs && times[i] < step.Step.ToUnixMs).ToArray();
            Assert.Equal(60, inside.Length);
            var summary = Assert.Single(step.Groups).Summary;
            Assert.Equal(inside.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
            Assert.Equal(step.Step, step.Covered);
        }
    }

    [Fact]
    public async Task Watch_pushes_the_trailing_window_every_interval_until_it_stops()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.live", [1, 2, 3]));
        var request = new WatchRequest
        {
            Query = new SummarizeRequest { Selector = Requests.Selector("shop.live"), Window = Requests.Last(TimeSpan.FromMinutes(5)) },
            Interval = Duration.FromTimeSpan(TimeSpan.FromMilliseconds(150)),
            MaxUpdates = 8,
        };
        using var call = server.Query.Watch(request);
        var counts = new List<ulong>();
        await foreach (var reply in call.ResponseStream.ReadAllAsync())
        {
            counts.Add(Assert.Single(reply.Groups).Summary.Count);
            if (counts.Count == 1)
            {
                await server.Ingest.PushAsync(Requests.Batch("shop.live", [4, 5]));
            }
        }

        // Updates already on their way when the push lands still say 3, so only the order is fixed:
        // 3 first, then 5 from some update on, and the stream ends after exactly MaxUpdates.
        Assert.Equal(8, counts.Count);
        Assert.Equal(3ul, counts[0]);
        Assert.Equal(5ul, counts[^1]);
        int firstFive = counts.IndexOf(5ul);
        Assert.All(counts.Take(firstFive), c => Assert.Equal(3ul, c));
        Assert.All(counts.Skip(firstFive), c => Assert.Equal(5ul, c));
    }

    [Fact]
    public async Task Watch_ends_when_the_caller_cancels()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.live", [1]));
        using var cancel = new CancellationTokenSource();
        var request = new WatchRequest { Query = new SummarizeRequest { Selector = Requests.Selector("shop.live"), Window = Requests.Last(TimeSpan.FromMinutes(5)) }, Interval = Duration.FromTimeSpan(TimeSpan.FromMilliseconds(100)) };
        using var call = server.Query.Watch(request, cancellationToken: cancel.Token);
        int seen = 0;
        var ex = await Assert.ThrowsAsync<RpcException>(async () =>
        {
            await foreach (var reply in call.ResponseStream.ReadAllAsync(cancel.Token))
            {
                if (++seen == 2)
                {
                    await cancel.CancelAsync();
                }
            }
        });
        Assert.Equal(StatusCode.Cancelled, ex.StatusCode);
        Assert.Equal(2, seen);
    }
}
