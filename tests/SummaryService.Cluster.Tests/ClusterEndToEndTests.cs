using Google.Protobuf.WellKnownTypes;
using Grpc.Net.Client;
using SummaryService.Cluster.Tests.Support;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Cluster.Tests;

/// <summary>Fixtures of the end-to-end cluster tests: one PostgreSQL and one Redis for the class.</summary>
public sealed class ClusterServices : IAsyncLifetime
{
    public PostgresServer Postgres { get; } = new();

    public RedisServer Redis { get; } = new();

    public async Task InitializeAsync()
    {
        await Postgres.InitializeAsync();
        await Redis.InitializeAsync();
    }

    public async Task DisposeAsync()
    {
        await Redis.DisposeAsync();
        await Postgres.DisposeAsync();
    }
}

/// <summary>
/// Three real server processes on loopback in Orleans mode (membership in Redis, partitions in
/// PostgreSQL) against one real server process alone: the same batches pushed through all three
/// nodes give, on every node, the one server's answers; after all nodes stop and start again,
/// everything acknowledged is there and nothing is applied twice.
/// </summary>
[Collection(ClusterProcesses.Name)]
public sealed class ClusterEndToEndTests(ClusterServices services)
{
    [Fact]
    public async Task Three_nodes_answer_what_one_server_answers_and_keep_it_across_a_restart_of_all()
    {
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        string database = await services.Postgres.NewEmptyDatabaseAsync();
        string clusterId = $"parcels-{Guid.NewGuid():N}";
        using var singleData = new TempDirectory();
        await using ServerProcess single = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = singleData.Path });
        Batch[] batches = [.. Parcels.Batches(now).Select(Parcels.ToWire)];
        using var singleChannel = GrpcChannel.ForAddress(single.Address);
        foreach (Batch batch in batches)
        {
            await new Ingest.IngestClient(singleChannel).PushAsync(batch);
        }

        var window = new Window { Range = new TimeRange { FromUnixMs = now - 7_200_000, ToUnixMs = now + 1 } };
        var summarize = new SummarizeRequest { Selector = new Selector { Metric = Parcels.Metric }, Window = window, GroupBy = { "dock" } };
        var timeline = new TimelineRequest { Selector = new Selector { Metric = Parcels.Metric }, Window = window, Step = Duration.FromTimeSpan(TimeSpan.FromMinutes(10)), GroupBy = { "belt" } };
        var query = new Query.QueryClient(singleChannel);
        SummarizeReply expected = await query.SummarizeAsync(summarize);
        TimelineReply expectedTimeline = await query.TimelineAsync(timeline);
        CatalogueReply expectedCatalogue = await query.CatalogueAsync(new CatalogueRequest { Metric = Parcels.Metric });

        using var clusterData = new TempDirectory();
        await using (var nodes = await ClusterNodes.StartAsync(3, database, services.Redis.Configuration, clusterId, clusterData.Path))
        {
            for (int i = 0; i < batches.Length; i++)
            {
                PushReply reply = await new Ingest.IngestClient(nodes.Channels[i % 3]).PushAsync(batches[i]);
                Assert.Equal((ulong)batches[i].Values.Count, reply.Accepted);
            }

            foreach (GrpcChannel channel in nodes.Channels)
            {
                var node = new Query.QueryClient(channel);
                WireAnswers.Equal(expected, await node.SummarizeAsync(summarize));
                WireAnswers.Equal(expectedTimeline, await node.TimelineAsync(timeline));
                WireAnswers.Equal(expectedCatalogue, await node.CatalogueAsync(new CatalogueRequest { Metric = Parcels.Metric }));
            }
        }

        await using (var restarted = await ClusterNodes.StartAsync(3, database, services.Redis.Configuration, clusterId, clusterData.Path))
        {
            WireAnswers.Equal(expected, await new Query.QueryClient(restarted.Channels[1]).SummarizeAsync(summarize));
            for (int i = 0; i < batches.Length; i++)
            {
                PushReply retried = await new Ingest.IngestClient(restarted.Channels[(i + 1) % 3]).PushAsync(batches[i]);
                Assert.True(retried.Duplicate, $"batch {batches[i].Sequence} was applied again after the restart");
            }

            WireAnswers.Equal(expected, await new Query.QueryClient(restarted.Channels[2]).SummarizeAsync(summarize));
        }
    }
}
