using System.Security.Cryptography;
using System.Text;
using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;

namespace SummaryService.Client.Tests;

/// <summary>The key goes out as <c>authorization: Bearer &lt;key&gt;</c> over plaintext loopback, and a refused key surfaces as Unauthenticated.</summary>
[Collection(nameof(ServerCollection))]
public sealed class ApiKeyTests
{
    private const string Key = "tb-producer-7f3a9c";

    [Fact]
    public async Task A_known_key_reads_and_writes_and_an_unknown_key_is_refused_as_unauthenticated()
    {
        string hash = Convert.ToHexString(SHA256.HashData(Encoding.UTF8.GetBytes(Key)));
        await using LiveServer server = await LiveServer.StartAsync(new Dictionary<string, string>
        {
            ["Auth__Enabled"] = "true",
            ["Auth__Keys__0__Name"] = "tallowbrook-producer",
            ["Auth__Keys__0__Sha256"] = hash,
            ["Auth__Keys__0__Scopes__0"] = "write",
            ["Auth__Keys__0__Scopes__1"] = "read",
            ["Auth__Keys__0__Scopes__2"] = "admin",
        });

        // A borrowed channel: the client adds the key to each call and leaves the channel open when disposed.
        using GrpcChannel channel = GrpcChannel.ForAddress(server.Address);
        using (var borrowing = new SummaryClient(channel, Key))
        {
            Assert.Empty(await borrowing.CatalogueAsync());
        }

        using var keyed = new SummaryClient(channel, Key);
        await using (var recorder = new MeasurementRecorder(keyed, Measurements.Quick))
        {
            recorder.Record("tallowbrook.login.latency", 12.5);
            recorder.Record("tallowbrook.login.latency", 14.0);
            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
        }

        Assert.Equal(2ul, (await keyed.SummaryOfAsync("tallowbrook.login.latency")).Count);
        Assert.Single(await keyed.CatalogueAsync());

        var noKey = await Assert.ThrowsAsync<RpcException>(() => server.Client.SummaryOfAsync("tallowbrook.login.latency"));
        Assert.Equal(StatusCode.Unauthenticated, noKey.StatusCode);

        using var wrong = new SummaryClient(new SummaryClientOptions { Address = server.Address, ApiKey = "tb-producer-guessed" });
        var refused = await Assert.ThrowsAsync<RpcException>(() => wrong.SummaryOfAsync("tallowbrook.login.latency"));
        Assert.Equal(StatusCode.Unauthenticated, refused.StatusCode);
        Assert.Contains("not known", refused.Status.Detail, StringComparison.Ordinal);

        // A producer with a refused key is told, counts what it loses, and does not retry forever.
        var rejections = new List<RejectedBatchEventArgs>();
        await using (var recorder = new MeasurementRecorder(wrong, Measurements.Quick))
        {
            recorder.BatchRejected += (_, e) =>
            {
                lock (rejections)
                {
                    rejections.Add(e);
                }
            };
            recorder.Record("tallowbrook.login.latency", 99);
            await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
            Assert.Equal(1, recorder.Statistics.ValuesRejected);
            Assert.Equal(0, recorder.Statistics.ValuesHeld);
        }

        RejectedBatchEventArgs rejection = Assert.Single(rejections);
        Assert.Equal("Unauthenticated", rejection.ErrorCode);
        Assert.Equal("tallowbrook.login.latency", rejection.Metric);
        Assert.Equal(2ul, (await keyed.SummaryOfAsync("tallowbrook.login.latency")).Count);
    }
}
