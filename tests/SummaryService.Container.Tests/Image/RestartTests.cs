using Grpc.Core;
using SummaryService.Container.Tests.Support;
using SummaryService.Contract.V1;
using Xunit.Abstractions;

namespace SummaryService.Container.Tests.Image;

/// <summary>What survives a container, on the volume: through a graceful stop and through SIGKILL.</summary>
[Collection(nameof(ServerImage))]
public sealed class RestartTests(ServerImage image, ITestOutputHelper output)
{
    private const int ValuesPerBatch = 50;

    [DockerFact]
    public async Task Docker_stop_ends_with_a_final_snapshot_and_a_new_container_on_the_volume_has_every_acknowledged_batch()
    {
        // No periodic snapshot and no log: only the snapshot taken on SIGTERM can keep the data.
        var settings = new Dictionary<string, string> { ["Persistence__Durability"] = "Snapshot", ["Persistence__SnapshotInterval"] = "01:00:00" };
        var batches = new NumberedBatches("depot.stop.weight", "stop-test", ValuesPerBatch);
        const ulong Batches = 20;
        await using var volume = await ServerContainer.CreateVolumeAsync();

        await using (var first = await ServerContainer.StartAsync(image, volume, settings))
        {
            for (ulong sequence = 1; sequence <= Batches; sequence++)
            {
                Assert.Equal((ulong)ValuesPerBatch, (await first.Ingest.PushAsync(batches.Batch(sequence))).Accepted);
            }

            Assert.Equal(0, await first.StopAsync()); // exited by itself, not killed at the stop timeout
            Assert.Contains("Snapshot 1: 1 series", await first.LogsAsync(), StringComparison.Ordinal);
        }

        await using var second = await ServerContainer.StartAsync(image, volume, settings);
        Summary summary = Assert.Single((await second.Query.SummarizeAsync(batches.LastHour())).Groups).Summary;
        var (count, sum) = batches.Expected(Batches);
        Assert.Equal(count, summary.Count);
        Assert.Equal(sum, summary.Sum);
    }

    [DockerFact]
    public async Task Killed_during_a_push_stream_a_new_container_on_the_volume_holds_every_acknowledged_batch_exactly_once()
    {
        var batches = new NumberedBatches("depot.crash.weight", "crash-test", ValuesPerBatch);
        const int KillAfterAcknowledged = 300;
        const ulong MaxBatches = 20_000; // bound on the writer; the kill comes long before
        await using var volume = await ServerContainer.CreateVolumeAsync();
        ulong acknowledged = 0;
        ulong attempted = 0;

        await using (var first = await ServerContainer.StartAsync(image, volume))
        {
            using var stream = first.Ingest.PushStream();
            Task writer = Task.Run(async () =>
            {
                try
                {
                    for (ulong sequence = 1; sequence <= MaxBatches; sequence++)
                    {
                        attempted = sequence; // counted before the write: a failed write may still have reached the server
                        await stream.RequestStream.WriteAsync(batches.Batch(sequence));
                    }
                }
                catch (Exception e) when (e is RpcException or InvalidOperationException or IOException)
                {
                    // The connection died with the container.
                }
            });

            Task? killing = null;
            try
            {
                while (await stream.ResponseStream.MoveNext(CancellationToken.None))
                {
                    PushReply reply = stream.ResponseStream.Current;
                    Assert.Equal(acknowledged + 1, reply.Sequence); // in order, none skipped
                    Assert.Equal((ulong)ValuesPerBatch, reply.Accepted);
                    if (++acknowledged == KillAfterAcknowledged)
                    {
                        killing = first.KillAsync(); // SIGKILL with batches still arriving
                    }
                }
            }
            catch (RpcException)
            {
                // The stream breaks when the server dies: expected.
            }

            await writer;
            Assert.NotNull(killing);
            await killing;
        }

        Assert.True(acknowledged >= KillAfterAcknowledged && attempted < MaxBatches, $"{acknowledged} acknowledged, {attempted} attempted");

        await using var second = await ServerContainer.StartAsync(image, volume);

        // The log kept every acknowledged batch, whole; batches sent but not acknowledged may be there too.
        ulong recovered = Assert.Single((await second.Query.SummarizeAsync(batches.LastHour())).Groups).Summary.Count;
        Assert.True(recovered % ValuesPerBatch == 0, $"{recovered} values: a batch was applied in part");
        output.WriteLine($"{acknowledged} batches acknowledged, {attempted} sent, {recovered / ValuesPerBatch} recovered after SIGKILL");
        Assert.InRange(recovered / ValuesPerBatch, acknowledged, attempted);

        // The producer resends everything it ever sent; the server applies what it lacks and
        // answers the rest as duplicates, so each batch ends up counted once.
        using (var resend = second.Ingest.PushStream())
        {
            for (ulong sequence = 1; sequence <= attempted; sequence++)
            {
                await resend.RequestStream.WriteAsync(batches.Batch(sequence));
            }

            await resend.RequestStream.CompleteAsync();
            while (await resend.ResponseStream.MoveNext(CancellationToken.None))
            {
                PushReply reply = resend.ResponseStream.Current;
                Assert.True(reply.Duplicate || reply.Sequence > acknowledged, $"acknowledged batch {reply.Sequence} was applied a second time");
            }
        }

        Summary summary = Assert.Single((await second.Query.SummarizeAsync(batches.LastHour())).Groups).Summary;
        var (count, sum) = batches.Expected(attempted);
        Assert.Equal(count, summary.Count);
        Assert.Equal(sum, summary.Sum);
    }
}
