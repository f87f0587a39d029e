using Grpc.Net.Client;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>What a graceful stop promises: the final snapshot, and the start-up notices an operator relies on.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class ShutdownTests
{
    [Fact]
    public async Task With_snapshot_durability_a_graceful_stop_keeps_every_acknowledged_batch()
    {
        using var data = new TempDirectory();
        var environment = new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = data.Path,
            ["Persistence__Durability"] = "Snapshot",

            // No periodic snapshot can happen during the test: only the final one can save the data.
            ["Persistence__SnapshotInterval"] = "01:00:00",
        };
        double[] values = Requests.Latencies(500, 91);

        await using (var server = await ServerProcess.StartAsync(environment))
        {
            using var channel = GrpcChannel.ForAddress(server.Address);
            await new Ingest.IngestClient(channel).PushAsync(Requests.Batch("shop.stop.latency", values));
            Assert.False(Directory.Exists(Path.Combine(data.Path, "wal")) && Directory.EnumerateFiles(Path.Combine(data.Path, "wal")).Any(f => new FileInfo(f).Length > 0), "snapshot durability must not write a log");
            await server.StopAsync();
            Assert.Equal(0, server.ExitCode);
        }

        await using (var restarted = await ServerProcess.StartAsync(environment))
        {
            using var channel = GrpcChannel.ForAddress(restarted.Address);
            var reply = await new Query.QueryClient(channel).SummarizeAsync(Requests.Summarize("shop.stop.latency"));
            var summary = Assert.Single(reply.Groups).Summary;
            Assert.Equal((ulong)values.Length, summary.Count);
            Assert.Equal(values.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
        }
    }

    [Fact]
    public async Task Running_without_authentication_is_announced_with_a_warning()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        Assert.Contains("Authentication is off", server.Output, StringComparison.Ordinal);
    }
}
