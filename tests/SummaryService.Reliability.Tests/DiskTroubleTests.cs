using Grpc.Core;
using Grpc.Health.V1;
using Microsoft.Extensions.DependencyInjection;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Reliability.Tests;

/// <summary>
/// A data directory that stops taking writes (full, failing) under a running server: writes that
/// cannot be made durable are refused with Unavailable and the reason, health says not serving,
/// queries go on, and when the disk works again the server recovers by itself, losing nothing it acknowledged.
/// </summary>
public sealed class DiskTroubleTests
{
    private const string Full = "No space left on device";

    [Fact]
    public async Task With_a_log_a_full_disk_refuses_writes_keeps_answering_reports_unhealthy_and_recovers_by_itself()
    {
        var disk = new FailingDisk();
        await using var server = LoopbackServer.Start(new Dictionary<string, string?> { ["Persistence:SnapshotInterval"] = "01:00:00" }, services: s => s.AddSingleton<IDataFiles>(disk));
        var ingest = new Ingest.IngestClient(server.Channel);
        for (ulong seq = 1; seq <= 20; seq++)
        {
            Assert.False((await ingest.PushAsync(Batch(seq))).Duplicate);
        }

        disk.Fail(Full);
        for (ulong seq = 21; seq <= 40; seq++)
        {
            var refused = await Assert.ThrowsAsync<RpcException>(() => ingest.PushAsync(Batch(seq)).ResponseAsync);
            Assert.Equal(StatusCode.Unavailable, refused.StatusCode);
            Assert.Contains(Full, refused.Status.Detail, StringComparison.Ordinal);
        }

        await WaitForHealthAsync(server, HealthCheckResponse.Types.ServingStatus.NotServing);
        var snapshot = await Assert.ThrowsAsync<RpcException>(() => new Admin.AdminClient(server.Channel).WriteSnapshotAsync(new WriteSnapshotRequest()).ResponseAsync);
        Assert.Equal(StatusCode.Unavailable, snapshot.StatusCode);
        using (var stream = ingest.PushStream())
        {
            await stream.RequestStream.WriteAsync(Batch(41));
            await stream.RequestStream.CompleteAsync();
            var ended = await Assert.ThrowsAsync<RpcException>(() => stream.ResponseStream.MoveNext(CancellationToken.None));
            Assert.Equal(StatusCode.Unavailable, ended.StatusCode);
        }

        // Queries go on: the acknowledged batches, and at most the one whose log write failed under it.
        ulong during = await CountAsync(server);
        Assert.InRange(during, Values(20), Values(21));

        disk.Heal();
        await WaitForHealthAsync(server, HealthCheckResponse.Types.ServingStatus.Serving);

        // The refused batches go again with their sequences, then new ones: each counted exactly once.
        for (ulong seq = 21; seq <= 50; seq++)
        {
            await ingest.PushAsync(Batch(seq));
        }

        Assert.Equal(Values(50), await CountAsync(server));

        // And the log on disk holds them once each: a copy taken now, as a crash would leave it, recovers the same.
        using var copy = new TempDirectory();
        TempDirectory.Copy(server.DataDirectory, copy.Path);
        await using var recovered = LoopbackServer.Start(dataDirectory: copy.Path);
        Assert.Equal(Values(50), await CountAsync(recovered));
        Assert.DoesNotContain("cutting", recovered.Log.Text, StringComparison.Ordinal);
    }

    [Fact]
    public async Task With_snapshots_only_a_failed_snapshot_refuses_writes_until_a_snapshot_works_again()
    {
        var disk = new FailingDisk();
        await using var server = LoopbackServer.Start(new Dictionary<string, string?> { ["Persistence:Durability"] = "Snapshot", ["Persistence:SnapshotInterval"] = "01:00:00" }, services: s => s.AddSingleton<IDataFiles>(disk));
        var ingest = new Ingest.IngestClient(server.Channel);
        var admin = new Admin.AdminClient(server.Channel);
        await ingest.PushAsync(Batch(1));

        disk.Fail(Full);
        var failed = await Assert.ThrowsAsync<RpcException>(() => admin.WriteSnapshotAsync(new WriteSnapshotRequest()).ResponseAsync);
        Assert.Equal(StatusCode.Unavailable, failed.StatusCode);
        var refused = await Assert.ThrowsAsync<RpcException>(() => ingest.PushAsync(Batch(2)).ResponseAsync);
        Assert.Equal(StatusCode.Unavailable, refused.StatusCode);
        Assert.Contains(Full, refused.Status.Detail, StringComparison.Ordinal);
        await WaitForHealthAsync(server, HealthCheckResponse.Types.ServingStatus.NotServing);
        Assert.Equal(Values(1), await CountAsync(server));

        disk.Heal();
        await admin.WriteSnapshotAsync(new WriteSnapshotRequest());
        await WaitForHealthAsync(server, HealthCheckResponse.Types.ServingStatus.Serving);
        await ingest.PushAsync(Batch(2));
        Assert.Equal(Values(2), await CountAsync(server));
    }

    private static Batch Batch(ulong sequence) => new() { Metric = "disk.trouble", Producer = "disk-producer", Sequence = sequence, Values = { 1, 2, 3, 4, 5, 6, 7, 8, 9, 10 } };

    private static ulong Values(ulong batches) => batches * 10;

    private static async Task<ulong> CountAsync(LoopbackServer server)
    {
        var reply = await new Query.QueryClient(server.Channel).SummarizeAsync(new SummarizeRequest { Selector = new Selector { Metric = "disk.trouble" }, Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) } });
        return reply.Groups[0].Summary.Count;
    }

    private static async Task WaitForHealthAsync(LoopbackServer server, HealthCheckResponse.Types.ServingStatus wanted)
    {
        var health = new Health.HealthClient(server.Channel);
        for (int attempt = 0; attempt < 100; attempt++)
        {
            if ((await health.CheckAsync(new HealthCheckRequest())).Status == wanted)
            {
                return;
            }

            await Task.Delay(100);
        }

        Assert.Fail($"health did not become {wanted} within 10 s");
    }
}
