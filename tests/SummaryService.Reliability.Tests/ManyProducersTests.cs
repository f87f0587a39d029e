using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>Two hundred producers streaming at once for a bounded time: no error, and every batch counted exactly once.</summary>
public sealed class ManyProducersTests(ITestOutputHelper output)
{
    private const int Producers = 200;

    [Fact]
    public async Task Two_hundred_concurrent_push_streams_end_without_error_and_every_batch_is_counted_once()
    {
        await using var server = LoopbackServer.Start();

        // Several connections, as 200 separate services would open: one HTTP/2 connection carries at most 100 streams.
        using var channel = GrpcChannel.ForAddress(server.GrpcAddress, new GrpcChannelOptions { HttpHandler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true } });
        var producers = Enumerable.Range(0, Producers).Select(i => new SequencedProducer($"many-{i}", $"many.p{i % 20}")).ToArray();
        using var stop = new CancellationTokenSource(TimeSpan.FromSeconds(5));

        await Task.WhenAll(producers.Select(p => Task.Run(() => p.RunAsync(channel, stop.Token))));

        Assert.All(producers, p => Assert.Equal(0, p.Unanswered));
        Assert.All(producers, p => Assert.Equal((int)p.HighestSent, p.Acknowledged.Count));
        var query = new Query.QueryClient(server.Channel);
        foreach (var group in producers.GroupBy(p => p.Metric))
        {
            var reply = await query.SummarizeAsync(new SummarizeRequest { Selector = new Selector { Metric = group.Key }, Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) } });
            long expectedCount = group.Sum(p => SequencedProducer.PrefixTotals(p.HighestSent).Count);
            double expectedSum = group.Sum(p => SequencedProducer.PrefixTotals(p.HighestSent).Sum);
            Assert.Equal((ulong)expectedCount, reply.Groups[0].Summary.Count);
            Assert.Equal(expectedSum, reply.Groups[0].Summary.Sum);
        }

        output.WriteLine($"{Producers} streams, {producers.Sum(p => (long)p.HighestSent)} batches of {SequencedProducer.ValuesPerBatch} values in 5 s, all acknowledged and counted once");
    }
}
