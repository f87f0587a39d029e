using SummaryService.TestSupport;

namespace SummaryService.Cli.Tests.Support;

/// <summary>One real server process (auth off, its own data directory) shared by the end-to-end tests; each test uses its own metric names.</summary>
public sealed class ServerFixture : IAsyncLifetime
{
    private readonly TempDirectory _data = new();
    private ServerProcess? _server;

    /// <summary>The server's gRPC address.</summary>
    public Uri Address => _server!.Address;

    public async Task InitializeAsync() =>
        _server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = _data.Path });

    public async Task DisposeAsync()
    {
        if (_server is not null)
        {
            await _server.DisposeAsync();
        }

        _data.Dispose();
    }
}

/// <summary>The tests that share the server run one after another.</summary>
[CollectionDefinition(nameof(ServerCollection))]
public sealed class ServerCollection : ICollectionFixture<ServerFixture>;
