using Grpc.Net.Client;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Mvc.Testing;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;
using SummaryService.TestSupport;

namespace SummaryService.Reliability.Tests.Support;

/// <summary>
/// The real server in this process on Kestrel, listening on two free loopback ports (HTTP/2 for gRPC,
/// HTTP/1.1 for the JSON routes) with the shipped appsettings.json and production log levels, its
/// own data directory, and every log line captured.
/// </summary>
internal sealed class LoopbackServer : IAsyncDisposable
{
    private readonly WebApplicationFactory<Program> _factory;
    private readonly TempDirectory? _ownData;

    private LoopbackServer(WebApplicationFactory<Program> factory, CapturedLog log, Uri grpc, Uri http, string dataDirectory, TempDirectory? ownData)
    {
        _factory = factory;
        _ownData = ownData;
        Log = log;
        GrpcAddress = grpc;
        HttpAddress = http;
        DataDirectory = dataDirectory;
        Channel = GrpcChannel.ForAddress(grpc, new GrpcChannelOptions { MaxReceiveMessageSize = 64 << 20, MaxSendMessageSize = 64 << 20 });
    }

    public CapturedLog Log { get; }

    public Uri GrpcAddress { get; }

    public Uri HttpAddress { get; }

    public string DataDirectory { get; }

    public GrpcChannel Channel { get; }

    public IServiceProvider Services => _factory.Services;

    /// <summary>Starts the server with <paramref name="settings"/> over the defaults; with no data directory given it gets a fresh one.</summary>
    public static LoopbackServer Start(IReadOnlyDictionary<string, string?>? settings = null, string? dataDirectory = null, Action<IServiceCollection>? services = null)
    {
        TempDirectory? own = dataDirectory is null ? new TempDirectory() : null;
        string data = dataDirectory ?? own!.Path;
        var log = new CapturedLog();
        var grpc = new Uri($"http://127.0.0.1:{ServerProcess.FreePort()}");
        var http = new Uri($"http://127.0.0.1:{ServerProcess.FreePort()}");
        var factory = new WebApplicationFactory<Program>().WithWebHostBuilder(builder =>
        {
            builder.UseEnvironment("Production");
            builder.UseSetting("Kestrel:Endpoints:Grpc:Url", grpc.ToString().TrimEnd('/'));
            builder.UseSetting("Kestrel:Endpoints:Http:Url", http.ToString().TrimEnd('/'));
            builder.UseSetting("Persistence:DataDirectory", data);
            foreach (var (key, value) in settings ?? new Dictionary<string, string?>())
            {
                builder.UseSetting(key, value);
            }

            builder.ConfigureLogging(logging =>
            {
                logging.ClearProviders();
                logging.AddProvider(log);
            });
            if (services is not null)
            {
                builder.ConfigureServices(services);
            }
        });
        factory.UseKestrel();
        factory.StartServer();
        return new LoopbackServer(factory, log, grpc, http, data, own);
    }

    /// <summary>A plain HTTP/1.1 client for the JSON routes.</summary>
    public HttpClient CreateHttpClient() => new() { BaseAddress = HttpAddress };

    public async ValueTask DisposeAsync()
    {
        Channel.Dispose();
        await _factory.DisposeAsync();
        _ownData?.Dispose();
    }
}
