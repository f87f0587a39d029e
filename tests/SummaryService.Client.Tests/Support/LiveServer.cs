using SummaryService.Client;
using SummaryService.TestSupport;

namespace SummaryService.Client.Tests.Support;

/// <summary>The real server on a loopback port with its own data directory (write-ahead log on), plus a client to it.</summary>
internal sealed class LiveServer : IAsyncDisposable
{
    private LiveServer(ServerProcess process, TempDirectory data, int port, SummaryClient client)
    {
        Process = process;
        Data = data;
        Port = port;
        Client = client;
    }

    public ServerProcess Process { get; private set; }

    public TempDirectory Data { get; }

    public int Port { get; }

    public Uri Address => new($"http://127.0.0.1:{Port}");

    /// <summary>A client without a key, for checking what arrived.</summary>
    public SummaryClient Client { get; }

    public static async Task<LiveServer> StartAsync(IReadOnlyDictionary<string, string>? settings = null, int? port = null)
    {
        var data = new TempDirectory();
        int chosen = port ?? ServerProcess.FreePort();
        ServerProcess process = await ServerProcess.StartAsync(Environment(data, settings), port: chosen);
        return new LiveServer(process, data, chosen, new SummaryClient(new SummaryClientOptions { Address = new Uri($"http://127.0.0.1:{chosen}") }));
    }

    /// <summary>Graceful stop (final snapshot), as an operator's restart would do.</summary>
    public Task StopAsync() => Process.StopAsync();

    /// <summary>Starts the server again on the same port and data directory.</summary>
    public async Task RestartAsync(IReadOnlyDictionary<string, string>? settings = null)
    {
        await Process.DisposeAsync();
        Process = await ServerProcess.StartAsync(Environment(Data, settings), port: Port);
    }

    public async ValueTask DisposeAsync()
    {
        Client.Dispose();
        await Process.DisposeAsync();
        Data.Dispose();
    }

    private static Dictionary<string, string> Environment(TempDirectory data, IReadOnlyDictionary<string, string>? settings)
    {
        var environment = new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = data.Path,
            ["Persistence__Durability"] = "Wal",
        };
        foreach (var (key, value) in settings ?? new Dictionary<string, string>())
        {
            environment[key] = value;
        }

        return environment;
    }
}
