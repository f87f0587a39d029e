using System.Net;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Server.Kestrel.Core;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Diagnostics.HealthChecks;
using Microsoft.Extensions.Logging;

namespace SummaryService.LoadTest.Baseline;

/// <summary>
/// The exact baseline as its own process, laid out like the real server: Kestrel, HTTP/2 gRPC on
/// loopback, the same contract and message limits, server garbage collection.
/// </summary>
public static class BaselineServer
{
    /// <summary>Serves until SIGTERM.</summary>
    public static async Task<int> RunAsync(int port)
    {
        var builder = WebApplication.CreateBuilder();
        builder.Logging.SetMinimumLevel(LogLevel.Warning);
        builder.WebHost.ConfigureKestrel(kestrel => kestrel.Listen(IPAddress.Loopback, port, listen => listen.Protocols = HttpProtocols.Http2));
        builder.Services.AddSingleton(TimeProvider.System);
        builder.Services.AddSingleton<RawValueStore>();
        builder.Services.AddGrpc(options =>
        {
            // The real server's default Server:MaxMessageBytes.
            options.MaxReceiveMessageSize = 16 << 20;
            options.MaxSendMessageSize = 16 << 20;
        });
        builder.Services.AddGrpcHealthChecks().AddCheck("raw-values", () => HealthCheckResult.Healthy());
        var app = builder.Build();
        app.MapGrpcService<RawIngestService>();
        app.MapGrpcService<RawQueryService>();
        app.MapGrpcHealthChecksService();
        await app.RunAsync().ConfigureAwait(false);
        return 0;
    }
}
