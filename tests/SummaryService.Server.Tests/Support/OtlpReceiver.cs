using System.Collections.Concurrent;
using System.Net;
using Microsoft.AspNetCore.Builder;
using Microsoft.AspNetCore.Hosting;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.AspNetCore.Http;
using Microsoft.AspNetCore.Server.Kestrel.Core;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Logging;

namespace SummaryService.Server.Tests.Support;

/// <summary>
/// A collector stand-in on loopback that accepts OTLP over HTTP with protobuf bodies (the
/// <c>/v1/traces</c> and <c>/v1/metrics</c> paths of the OTLP specification) and keeps what it got.
/// </summary>
internal sealed class OtlpReceiver : IAsyncDisposable
{
    private readonly WebApplication _app;
    private readonly ConcurrentQueue<(string Path, string ContentType, byte[] Body)> _received = new();

    private OtlpReceiver(WebApplication app) => _app = app;

    public Uri Address => new(_app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.First());

    public static async Task<OtlpReceiver> StartAsync()
    {
        var builder = WebApplication.CreateSlimBuilder();

        // The test folder holds the server's appsettings.json; its Kestrel endpoints are not ours.
        builder.Configuration.Sources.Clear();
        builder.Logging.ClearProviders();
        builder.WebHost.ConfigureKestrel(k => k.Listen(IPAddress.Loopback, 0, listen => listen.Protocols = HttpProtocols.Http1));
        var receiver = new OtlpReceiver(builder.Build());
        receiver._app.MapPost("/v1/{signal}", async context =>
        {
            using var body = new MemoryStream();
            await context.Request.Body.CopyToAsync(body, context.RequestAborted);
            receiver._received.Enqueue((context.Request.Path.Value ?? "", context.Request.ContentType ?? "", body.ToArray()));

            // An empty Export…ServiceResponse: everything accepted.
            context.Response.ContentType = "application/x-protobuf";
            context.Response.StatusCode = StatusCodes.Status200OK;
        });
        await receiver._app.StartAsync();
        return receiver;
    }

    /// <summary>The bodies received on one path so far.</summary>
    public IReadOnlyList<byte[]> BodiesAt(string path) => [.. _received.Where(r => r.Path == path).Select(r => r.Body)];

    /// <summary>Every path posted to, for failure messages.</summary>
    public IReadOnlyList<string> Paths => [.. _received.Select(r => r.Path)];

    /// <summary>The content types the exporter used.</summary>
    public IReadOnlyList<string> ContentTypes => [.. _received.Select(r => r.ContentType).Distinct()];

    public async ValueTask DisposeAsync()
    {
        await _app.StopAsync();
        await _app.DisposeAsync();
    }
}
