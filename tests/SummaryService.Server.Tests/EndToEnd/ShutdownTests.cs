using Grpc.Core;
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
    public async Task A_stop_during_a_busy_push_stream_answers_what_it_read_ends_the_stream_cleanly_and_keeps_every_acknowledged_batch()
    {
        using var data = new TempDirectory();
        var environment = new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path };
        const int ValuesPerBatch = 100;
        const int MaxBatches = 20_000; // bound on the writer; the stop comes long before
        int acknowledged = 0;
        int refusedAsStopping = 0;
        int ending = 0;
        StatusCode status;
        await using (var server = await ServerProcess.StartAsync(environment))
        {
            using var channel = GrpcChannel.ForAddress(server.Address);
            using var stream = new Ingest.IngestClient(channel).PushStream();
            double[] values = Requests.Latencies(ValuesPerBatch, 61);
            using var endingSeen = new CancellationTokenSource();

            // A well-behaved sender: it writes until the server says the stream is ending, then
            // completes its side of the call.
            Task writer = Task.Run(async () =>
            {
                try
                {
                    for (ulong sequence = 1; sequence <= MaxBatches && !endingSeen.IsCancellationRequested; sequence++)
                    {
                        Batch batch = Requests.Batch("ferry.drain.latency", values);
                        batch.Producer = "drain-test";
                        batch.Sequence = sequence;
                        await stream.RequestStream.WriteAsync(batch);
                    }

                    await stream.RequestStream.CompleteAsync();
                }
                catch (Exception e) when (e is RpcException or InvalidOperationException or IOException)
                {
                    // The call ended under the writer: the status below says how.
                }
            });

            Task stopping = Task.CompletedTask;
            ulong expected = 1;
            try
            {
                while (await stream.ResponseStream.MoveNext())
                {
                    PushReply reply = stream.ResponseStream.Current;
                    Assert.Equal(expected++, reply.Sequence); // in order, none skipped
                    if (reply.StreamEnding)
                    {
                        ending++;
                        await endingSeen.CancelAsync();
                    }

                    if (reply.ErrorCode.Length > 0)
                    {
                        // Only a stopping server refuses these batches, and only after saying so.
                        Assert.Equal(nameof(StatusCode.Unavailable), reply.ErrorCode);
                        Assert.True(reply.StreamEnding);
                        Assert.Equal(0UL, reply.Accepted);
                        refusedAsStopping++;
                        continue;
                    }

                    Assert.Equal(0, refusedAsStopping); // nothing is applied after the first refusal
                    Assert.Equal((ulong)ValuesPerBatch, reply.Accepted);
                    if (++acknowledged == 200)
                    {
                        stopping = server.StopAsync(); // SIGTERM with batches still arriving
                    }
                }

                status = stream.GetStatus().StatusCode;
            }
            catch (RpcException e)
            {
                status = e.StatusCode;
            }

            await writer;
            await stopping;
            Assert.Equal(0, server.ExitCode); // a hung stream would have kept the host past its stop limit
        }

        Assert.True(acknowledged >= 200 && acknowledged < MaxBatches, $"{acknowledged} batches acknowledged");
        Assert.True(ending > 0, "no reply said the stream was ending");
        Assert.Equal(StatusCode.OK, status); // the stream ends, it is not torn down

        // Each batch answered with values accepted was applied; the refused ones and those never
        // answered were not, so the store holds exactly the acknowledged ones.
        await using var restarted = await ServerProcess.StartAsync(environment);
        using var restartedChannel = GrpcChannel.ForAddress(restarted.Address);
        var summary = Assert.Single((await new Query.QueryClient(restartedChannel).SummarizeAsync(Requests.Summarize("ferry.drain.latency"))).Groups).Summary;
        Assert.Equal((ulong)(acknowledged * ValuesPerBatch), summary.Count);
    }

    [Fact]
    public async Task Running_without_authentication_is_announced_with_a_warning()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        Assert.Contains("Authentication is off", server.Output, StringComparison.Ordinal);
    }
}
