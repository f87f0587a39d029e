using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>A hundred watchers that never read: memory stays bounded and each is cut off with a clear status once it lags too far.</summary>
public sealed class SlowConsumerTests(ITestOutputHelper output)
{
    private const int Watchers = 100;

    [Fact]
    public async Task Watchers_that_never_read_hold_bounded_memory_and_are_cut_off_with_resource_exhausted()
    {
        await using var server = LoopbackServer.Start(new Dictionary<string, string?> { ["Server:WatchMaxLag"] = "00:00:02" });
        var batch = new Batch { Metric = "slow.watch" };
        batch.Values.AddRange(Enumerable.Range(0, 20_000).Select(i => (double)(i % 977)));
        await new Ingest.IngestClient(server.Channel).PushAsync(batch);

        // Updates of about 60 KB (2000 histogram bins) every 100 ms fill each stream's flow-control window within a few updates.
        var request = new WatchRequest
        {
            Query = new SummarizeRequest { Selector = new Selector { Metric = "slow.watch" }, Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) }, Histogram = new HistogramSpec { BinCount = 2000 } },
            Interval = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromMilliseconds(100)),
        };
        using var watchChannel = GrpcChannel.ForAddress(server.GrpcAddress, new GrpcChannelOptions { MaxReceiveMessageSize = 64 << 20, HttpHandler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true } });
        var query = new Query.QueryClient(watchChannel);
        long before = Memory();
        var calls = Enumerable.Range(0, Watchers).Select(_ => query.Watch(request)).ToArray();

        await Task.Delay(TimeSpan.FromSeconds(1));
        long stuck = Memory();
        await Task.Delay(TimeSpan.FromSeconds(4)); // past the 2 s lag
        long later = Memory();
        output.WriteLine($"managed memory: {before >> 20} MB before, {stuck >> 20} MB with {Watchers} stuck watchers, {later >> 20} MB after the cut-off");
        Assert.True(stuck - before < 256L << 20, $"{(stuck - before) >> 20} MB for {Watchers} stuck watchers");
        Assert.True(later - before < 256L << 20, $"{(later - before) >> 20} MB after the cut-off");

        // Each reader, when it finally reads, finds the updates that were in flight and then the reason its watch ended.
        int[] delivered = new int[Watchers];
        using var patience = new CancellationTokenSource(TimeSpan.FromSeconds(30));
        for (int i = 0; i < Watchers; i++)
        {
            using var call = calls[i];
            var ended = await Assert.ThrowsAsync<RpcException>(async () =>
            {
                while (await call.ResponseStream.MoveNext(patience.Token))
                {
                    delivered[i]++;
                }
            });
            Assert.True(ended.StatusCode == StatusCode.ResourceExhausted, ended.Status.ToString());
            Assert.Contains("took no update for 2s", ended.Status.Detail, StringComparison.Ordinal);
        }

        output.WriteLine($"updates delivered before the cut-off: {delivered.Min()} to {delivered.Max()} per watcher (the rest were never produced)");
        Assert.True(delivered.Max() < 50, "a watcher that does not read must not have updates piled up for it");
        var health = await new Health.HealthClient(server.Channel).CheckAsync(new HealthCheckRequest());
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, health.Status);
    }

    private static long Memory() => GC.GetTotalMemory(forceFullCollection: true);
}
