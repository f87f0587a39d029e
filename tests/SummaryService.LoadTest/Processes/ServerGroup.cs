namespace SummaryService.LoadTest.Processes;

/// <summary>
/// The processes of one target: a single server, or the nodes of a cluster that share the load.
/// Calls are spread over the nodes by their index; CPU and memory are the sums over all nodes, so
/// one node and several compare as one service.
/// </summary>
public sealed class ServerGroup(IReadOnlyList<ChildServer> servers) : IAsyncDisposable
{
    /// <summary>The nodes, in start order.</summary>
    public IReadOnlyList<ChildServer> Servers => servers;

    /// <summary>The process ids of every node.</summary>
    public IReadOnlyList<int> Pids => [.. servers.Select(s => s.Pid)];

    /// <summary>The gRPC address the <paramref name="index"/>-th client uses: the nodes in turn.</summary>
    public Uri AddressFor(int index) => servers[index % servers.Count].Address;

    /// <summary>A /proc/PID/status figure summed over the nodes (VmRSS, VmHWM).</summary>
    public long StatusBytes(string field) => servers.Sum(s => ProcFigures.StatusBytes(s.Pid, field));

    /// <summary>CPU seconds summed over the nodes.</summary>
    public double CpuSeconds() => servers.Sum(s => ProcFigures.CpuSeconds(s.Pid));

    /// <summary>Stops every node at once (each writes its final snapshot).</summary>
    public async ValueTask DisposeAsync() => await Task.WhenAll(servers.Select(s => s.DisposeAsync().AsTask())).ConfigureAwait(false);
}
