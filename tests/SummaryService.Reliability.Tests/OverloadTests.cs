using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>A producer faster than the server meets flow control or ResourceExhausted; what the server holds for it stays bounded.</summary>
public sealed class OverloadTests(ITestOutputHelper output)
{
    [Fact]
    public async Task A_stream_producer_that_never_reads_its_replies_is_held_back_by_flow_control()
    {
        await using var server = LoopbackServer.Start();
        using var call = new Ingest.IngestClient(server.Channel).PushStream();
        var batch = new Batch { Metric = "overload.stream" };
        batch.Values.AddRange(Enumerable.Range(0, 100).Select(i => (double)i));
        long before = GC.GetTotalMemory(forceFullCollection: true);

        int written = 0;
        bool held = false;
        while (written < 200_000)
        {
            Task write = call.RequestStream.WriteAsync(batch);
            if (await Task.WhenAny(write, Task.Delay(TimeSpan.FromSeconds(3))) != write)
            {
                held = true;
                break;
            }

            await write;
            written++;
        }

        long during = GC.GetTotalMemory(forceFullCollection: true);
        output.WriteLine($"writes stopped completing after {written} batches; managed memory {before >> 20} MB before, {during >> 20} MB while held back");
        Assert.True(held, $"{written} batches were taken from a sender that reads no reply");
        Assert.True(during - before < 128L << 20, $"{(during - before) >> 20} MB held for one stalled stream");
    }

    [Fact]
    public async Task Unary_pushes_past_the_held_budget_are_refused_with_resource_exhausted_and_the_rest_counted_exactly()
    {
        // A slow log (one fsync a second) keeps batches held; the budget holds four of these 512 KB batches at most.
        await using var server = LoopbackServer.Start(new Dictionary<string, string?>
        {
            ["Server:MaxMessageBytes"] = "1048576",
            ["Server:MaxIngestBytesHeld"] = "2200000",
            ["Persistence:LogSyncInterval"] = "00:00:01",
        });
        using var channel = GrpcChannel.ForAddress(server.GrpcAddress, new GrpcChannelOptions { HttpHandler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true } });
        var ingest = new Ingest.IngestClient(channel);
        var batch = new Batch { Metric = "overload.unary" };
        batch.Values.AddRange(Enumerable.Range(0, 64 * 1024).Select(i => (double)(i % 100)));

        var outcomes = await Task.WhenAll(Enumerable.Range(0, 64).Select(async _ =>
        {
            try
            {
                return (await ingest.PushAsync(batch)).Accepted == (ulong)batch.Values.Count ? "accepted" : "short";
            }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.ResourceExhausted && ex.Status.Detail.Contains("Server:MaxIngestBytesHeld", StringComparison.Ordinal))
            {
                return "refused";
            }
        }));

        int accepted = outcomes.Count(o => o == "accepted");
        int refused = outcomes.Count(o => o == "refused");
        output.WriteLine($"64 concurrent 512 KB pushes against a 2.2 MB budget: {accepted} accepted, {refused} refused");
        Assert.Equal(64, accepted + refused);
        Assert.InRange(accepted, 1, 63);
        var reply = await new Query.QueryClient(server.Channel).SummarizeAsync(new SummarizeRequest { Selector = new Selector { Metric = "overload.unary" }, Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) } });
        Assert.Equal((ulong)(accepted * batch.Values.Count), reply.Groups[0].Summary.Count);
    }
}
