using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using SummaryService.TestSupport;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>Server processes in Orleans mode on loopback, each with its own silo port, as an operator would start them.</summary>
public sealed class ClusterNodes : IAsyncDisposable
{
    private readonly List<ServerProcess> _servers;

    private ClusterNodes(List<ServerProcess> servers, int[] siloPorts)
    {
        _servers = servers;
        SiloPorts = siloPorts;
        Channels = [.. servers.Select(s => GrpcChannel.ForAddress(s.Address))];
    }

    public IReadOnlyList<GrpcChannel> Channels { get; }

    public IReadOnlyList<ServerProcess> Servers => _servers;

    /// <summary>Each node's port for traffic between nodes, part of the node's name in store figures.</summary>
    public IReadOnlyList<int> SiloPorts { get; }

    /// <summary>The index of the node a store figure's node name stands for.</summary>
    public int IndexOf(string node) => Enumerable.Range(0, SiloPorts.Count).Single(i => node.Contains($":{SiloPorts[i]}", StringComparison.Ordinal));

    /// <summary>
    /// Starts the nodes and, with <paramref name="waitServing"/>, waits until each serves (every
    /// partition answers); <paramref name="settings"/> are further settings every node gets.
    /// </summary>
    public static async Task<ClusterNodes> StartAsync(int count, string postgres, string redis, string clusterId, string dataRoot, int partitions = 16, IReadOnlyDictionary<string, string>? settings = null, bool waitServing = true)
    {
        int[] siloPorts = [.. Enumerable.Range(0, count).Select(_ => ServerProcess.FreePort())];
        var starting = Enumerable.Range(0, count).Select(i => ServerProcess.StartAsync(new Dictionary<string, string>(settings ?? new Dictionary<string, string>())
        {
            ["Cluster__Mode"] = "Orleans",
            ["Cluster__Postgres"] = postgres,
            ["Cluster__Redis"] = redis,
            ["Cluster__ClusterId"] = clusterId,
            ["Cluster__Partitions"] = partitions.ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["Cluster__SiloPort"] = siloPorts[i].ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["Cluster__GatewayPort"] = ServerProcess.FreePort().ToString(System.Globalization.CultureInfo.InvariantCulture),
            ["Persistence__DataDirectory"] = Path.Combine(dataRoot, $"node{i}"),
        }, waitForHealth: false)).ToArray();
        var nodes = new ClusterNodes([.. await Task.WhenAll(starting)], siloPorts);
        if (!waitServing)
        {
            return nodes;
        }

        await Task.WhenAll(nodes.Channels.Select((channel, i) => WaitServingAsync(channel, nodes._servers[i])));
        return nodes;
    }

    /// <summary>
    /// Nodes starting together take turns joining the membership, and the first health check
    /// activates every partition: on a busy two-core machine that takes tens of seconds, longer
    /// than one server alone may take, so the wait here is longer and bounded by itself.
    /// </summary>
    private static async Task WaitServingAsync(GrpcChannel channel, ServerProcess server)
    {
        var health = new Health.HealthClient(channel);
        for (int attempt = 0; attempt < 240; attempt++)
        {
            Assert.False(server.HasExited, $"a node exited while starting:\n{server.Output}");
            try
            {
                var reply = await health.CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.AddSeconds(10));
                if (reply.Status == HealthCheckResponse.Types.ServingStatus.Serving)
                {
                    return;
                }
            }
            catch (RpcException)
            {
                // Not listening yet, or its partitions are still being placed.
            }

            await Task.Delay(500);
        }

        Assert.Fail($"a node did not become healthy within two minutes:\n{server.Output}");
    }

    /// <summary>Stops every node gracefully, all at once: each deactivates its partitions, which write their final snapshots.</summary>
    public async ValueTask DisposeAsync()
    {
        foreach (GrpcChannel channel in Channels)
        {
            channel.Dispose();
        }

        await Task.WhenAll(_servers.Select(s => s.DisposeAsync().AsTask()));
    }
}
