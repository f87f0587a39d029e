using Grpc.Core;
using Grpc.Net.Client;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.Support;

/// <summary>The server in-process on a test host, with its own data directory and settings, and typed clients over it.</summary>
internal sealed class TestServer : IAsyncDisposable
{
    private readonly TempDirectory _data = new();
    private readonly WebApplicationFactory<Program> _factory;

    public TestServer(IReadOnlyDictionary<string, string?>? settings = null, Action<IServiceCollection>? services = null)
    {
        _factory = new WebApplicationFactory<Program>().WithWebHostBuilder(builder =>
        {
            builder.UseSetting("Persistence:DataDirectory", _data.Path);
            builder.UseSetting("Persistence:Durability", "Wal");
            builder.UseSetting("Persistence:LogSyncInterval", "00:00:00.001");
            builder.UseSetting("Logging:LogLevel:Default", "Warning");
            foreach (var (key, value) in settings ?? new Dictionary<string, string?>())
            {
                builder.UseSetting(key, value);
            }

            if (services is not null)
            {
                builder.ConfigureServices(services);
            }
        });
        Channel = GrpcChannel.ForAddress(_factory.Server.BaseAddress, new GrpcChannelOptions { HttpHandler = _factory.Server.CreateHandler(), MaxReceiveMessageSize = 64 << 20, MaxSendMessageSize = 64 << 20 });
    }

    public GrpcChannel Channel { get; }

    public IServiceProvider Services => _factory.Services;

    public Ingest.IngestClient Ingest => new(Channel);

    public Query.QueryClient Query => new(Channel);

    public Admin.AdminClient Admin => new(Channel);

    /// <summary>A plain HTTP/1.1 client for the JSON routes and the page.</summary>
    public HttpClient CreateHttpClient() => _factory.CreateClient();

    /// <summary>Headers carrying an API key.</summary>
    public static Metadata Bearer(string key) => new() { { "authorization", $"Bearer {key}" } };

    public async ValueTask DisposeAsync()
    {
        Channel.Dispose();
        await _factory.DisposeAsync();
        _data.Dispose();
    }
}
