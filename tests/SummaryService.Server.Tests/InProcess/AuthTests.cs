using Grpc.Core;
using Grpc.Health.V1;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class AuthTests
{
    private const string Writer = "writer-key-team-a";
    private const string Reader = "reader-key-team-a";
    private const string Operator = "operator-key";
    private const string WriterAll = "writer-key-every-team";

    private static TestServer Start() => new(new Dictionary<string, string?>
    {
        ["Auth:Enabled"] = "true",
        ["Auth:Keys:0:Name"] = "team-a-writer",
        ["Auth:Keys:0:Sha256"] = ApiKeyRegistry.HashOf(Writer),
        ["Auth:Keys:0:Scopes:0"] = "write",
        ["Auth:Keys:0:Prefixes:0"] = "team-a.",
        ["Auth:Keys:1:Name"] = "team-a-reader",
        ["Auth:Keys:1:Sha256"] = ApiKeyRegistry.HashOf(Reader),
        ["Auth:Keys:1:Scopes:0"] = "read",
        ["Auth:Keys:1:Prefixes:0"] = "team-a.",
        ["Auth:Keys:2:Name"] = "operator",
        ["Auth:Keys:2:Sha256"] = ApiKeyRegistry.HashOf(Operator),
        ["Auth:Keys:2:Scopes:0"] = "admin",
        ["Auth:Keys:2:Scopes:1"] = "read",
        ["Auth:Keys:3:Name"] = "shared-writer",
        ["Auth:Keys:3:Sha256"] = ApiKeyRegistry.HashOf(WriterAll),
        ["Auth:Keys:3:Scopes:0"] = "write",
    });

    public static TheoryData<string?, string, StatusCode> Refusals => new()
    {
        { null, "team-a.latency", StatusCode.Unauthenticated },
        { "not-a-key", "team-a.latency", StatusCode.Unauthenticated },
        { Reader, "team-a.latency", StatusCode.PermissionDenied },
        { Writer, "team-b.latency", StatusCode.PermissionDenied },
        { Operator, "team-a.latency", StatusCode.PermissionDenied },
    };

    [Theory]
    [MemberData(nameof(Refusals))]
    public async Task A_refused_push_writes_nothing(string? key, string metric, StatusCode code)
    {
        await using var server = Start();
        var headers = key is null ? new Metadata() : TestServer.Bearer(key);
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Ingest.PushAsync(Requests.Batch(metric, [1, 2]), headers));
        Assert.Equal(code, ex.StatusCode);

        // A stream is refused as a whole when the key cannot write at all, and batch by batch (with
        // an error reply) when only the batch's metric lies outside the key's prefixes.
        using var stream = server.Ingest.PushStream(headers);
        try
        {
            await stream.RequestStream.WriteAsync(Requests.Batch(metric, [3]));
            await stream.RequestStream.CompleteAsync();
        }
        catch (RpcException)
        {
            // The server refused the call before reading; the status is checked below.
        }

        try
        {
            Assert.True(await stream.ResponseStream.MoveNext());
            Assert.Equal(code.ToString(), stream.ResponseStream.Current.ErrorCode);
        }
        catch (RpcException streamRefusal)
        {
            Assert.Equal(code, streamRefusal.StatusCode);
        }

        Assert.Empty((await server.Query.CatalogueAsync(new CatalogueRequest(), TestServer.Bearer(Operator))).Series);
    }

    [Fact]
    public async Task Keys_read_and_write_only_inside_their_prefixes()
    {
        await using var server = Start();
        await server.Ingest.PushAsync(Requests.Batch("team-a.latency", [1, 2, 3]), TestServer.Bearer(Writer));
        var own = await server.Query.SummarizeAsync(Requests.Summarize("team-a.latency"), TestServer.Bearer(Reader));
        Assert.Equal(3ul, Assert.Single(own.Groups).Summary.Count);

        var other = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(Requests.Summarize("team-b.latency"), TestServer.Bearer(Reader)));
        Assert.Equal(StatusCode.PermissionDenied, other.StatusCode);
        var writerReading = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.SummarizeAsync(Requests.Summarize("team-a.latency"), TestServer.Bearer(Writer)));
        Assert.Equal(StatusCode.PermissionDenied, writerReading.StatusCode);
        var readerAdmin = await Assert.ThrowsAsync<RpcException>(async () => await server.Admin.HoldingsAsync(new HoldingsRequest(), TestServer.Bearer(Reader)));
        Assert.Equal(StatusCode.PermissionDenied, readerAdmin.StatusCode);
        Assert.Equal(1u, (await server.Admin.HoldingsAsync(new HoldingsRequest(), TestServer.Bearer(Operator))).Series);
    }

    [Fact]
    public async Task A_read_key_lists_the_series_inside_its_prefixes_and_nothing_else()
    {
        await using var server = Start();
        await server.Ingest.PushAsync(Requests.Batch("team-a.latency", [1, 2, 3]), TestServer.Bearer(Writer));
        await server.Ingest.PushAsync(Requests.Batch("team-b.latency", [4, 5]), TestServer.Bearer(WriterAll));

        var listed = await server.Query.CatalogueAsync(new CatalogueRequest(), TestServer.Bearer(Reader));
        Assert.Equal(["team-a.latency"], listed.Series.Select(s => s.Metric));
        var outside = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.CatalogueAsync(new CatalogueRequest { Metric = "team-b.latency" }, TestServer.Bearer(Reader)));
        Assert.Equal(StatusCode.PermissionDenied, outside.StatusCode);
        var writerListing = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.CatalogueAsync(new CatalogueRequest(), TestServer.Bearer(Writer)));
        Assert.Equal(StatusCode.PermissionDenied, writerListing.StatusCode);
        Assert.Equal(2, (await server.Query.CatalogueAsync(new CatalogueRequest(), TestServer.Bearer(Operator))).Series.Count);
    }

    [Theory]
    [InlineData("/summary.v1.Ingest/Push", Scope.Write)]
    [InlineData("/summary.v1.Ingest/PushSketch", Scope.Write)]
    [InlineData("/summary.v1.Query/Summarize", Scope.Read)]
    [InlineData("/summary.v1.Query/Timeline", Scope.Read)]
    [InlineData("/summary.v1.Query/Catalogue", Scope.Read)]
    [InlineData("/summary.v1.Admin/RemoveSeries", Scope.Admin)]
    [InlineData("/summary.v1.Admin/WriteSnapshot", Scope.Admin)]
    [InlineData("/summary.v1.Admin/Holdings", Scope.Admin)]
    [InlineData("/grpc.health.v1.Health/Check", Scope.None)]
    public void Each_service_needs_one_scope_the_catalogue_a_read(string method, Scope scope) =>
        Assert.Equal(scope, ApiKeyInterceptor.ScopeOf(method));

    [Fact]
    public async Task A_read_key_may_not_remove_series_or_write_snapshots()
    {
        await using var server = Start();
        await server.Ingest.PushAsync(Requests.Batch("team-a.latency", [1, 2, 3]), TestServer.Bearer(Writer));
        var removal = await Assert.ThrowsAsync<RpcException>(async () => await server.Admin.RemoveSeriesAsync(new RemoveSeriesRequest { Metric = "team-a.latency" }, TestServer.Bearer(Reader)));
        Assert.Equal(StatusCode.PermissionDenied, removal.StatusCode);
        var snapshot = await Assert.ThrowsAsync<RpcException>(async () => await server.Admin.WriteSnapshotAsync(new WriteSnapshotRequest(), TestServer.Bearer(Reader)));
        Assert.Equal(StatusCode.PermissionDenied, snapshot.StatusCode);
        Assert.Single((await server.Query.CatalogueAsync(new CatalogueRequest(), TestServer.Bearer(Reader))).Series);
    }

    [Fact]
    public async Task Health_answers_without_a_key()
    {
        await using var server = Start();
        var health = await new Health.HealthClient(server.Channel).CheckAsync(new HealthCheckRequest());
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, health.Status);
    }
}
