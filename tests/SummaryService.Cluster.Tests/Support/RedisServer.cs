using System.Diagnostics;
using System.Net.Sockets;
using SummaryService.TestSupport;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>A real Redis server of the machine's Debian install (<c>apt-get install redis-server</c>) on a free loopback port, keeping nothing on disk.</summary>
public sealed class RedisServer : IAsyncLifetime
{
    private Process? _process;

    public int Port { get; private set; }

    public string Configuration => $"127.0.0.1:{Port}";

    public async Task InitializeAsync()
    {
        Assert.True(File.Exists("/usr/bin/redis-server"), "redis-server is not installed (Debian package redis-server; .ci/run installs it).");
        Port = ServerProcess.FreePort();
        _process = LocalCommand.Start("/usr/bin/redis-server", ["--port", Port.ToString(System.Globalization.CultureInfo.InvariantCulture), "--bind", "127.0.0.1", "--save", "", "--appendonly", "no"]);
        for (int attempt = 0; attempt < 100; attempt++)
        {
            try
            {
                using var client = new TcpClient();
                await client.ConnectAsync("127.0.0.1", Port);
                return;
            }
            catch (SocketException)
            {
                await Task.Delay(100);
            }
        }

        Assert.Fail($"redis-server did not listen on port {Port} within 10 s.");
    }

    public Task DisposeAsync()
    {
        if (_process is { HasExited: false })
        {
            _process.Kill();
            _process.WaitForExit();
        }

        _process?.Dispose();
        return Task.CompletedTask;
    }
}
