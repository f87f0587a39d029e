using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Connection;

/// <summary>
/// One channel to the server with the generated clients. The API key rides on every call as
/// <c>authorization: Bearer</c>, added once here so no command can forget it.
/// </summary>
public sealed class ServerConnection : IDisposable
{
    /// <summary>How long a unary call may take before the tool reports the server as not answering.</summary>
    public static readonly TimeSpan UnaryDeadline = TimeSpan.FromSeconds(60);

    private readonly GrpcChannel _channel;

    private ServerConnection(Uri address, string? apiKey)
    {
        Address = address;
        _channel = GrpcChannel.ForAddress(address, new GrpcChannelOptions
        {
            MaxReceiveMessageSize = 64 * 1024 * 1024,
            MaxSendMessageSize = 16 * 1024 * 1024,
        });
        CallInvoker invoker = ApiKeyHeader.Wrap(_channel.CreateCallInvoker(), apiKey);
        Ingest = new Ingest.IngestClient(invoker);
        Query = new Query.QueryClient(invoker);
        Admin = new Admin.AdminClient(invoker);
    }

    /// <summary>The server's gRPC address.</summary>
    public Uri Address { get; }

    /// <summary>Push batches.</summary>
    public Ingest.IngestClient Ingest { get; }

    /// <summary>Summaries, timelines, watches, comparisons and the catalogue.</summary>
    public Query.QueryClient Query { get; }

    /// <summary>Upkeep: removal, snapshots, holdings.</summary>
    public Admin.AdminClient Admin { get; }

    /// <summary>Opens a connection (lazily: nothing is sent until the first call), refusing an address that is not http(s).</summary>
    public static ServerConnection Open(string server, string? apiKey)
    {
        if (!Uri.TryCreate(server, UriKind.Absolute, out Uri? address) || (address.Scheme != Uri.UriSchemeHttp && address.Scheme != Uri.UriSchemeHttps))
        {
            throw new UsageException($"--server '{server}' is not an http:// or https:// address (e.g. http://127.0.0.1:5170).");
        }

        return new ServerConnection(address, apiKey);
    }

    /// <summary>Call options for a unary call: the caller's cancellation and the deadline.</summary>
    public static CallOptions Unary(CancellationToken cancellationToken) =>
        new(deadline: DateTime.UtcNow.Add(UnaryDeadline), cancellationToken: cancellationToken);

    /// <inheritdoc/>
    public void Dispose() => _channel.Dispose();
}
