using Grpc.Net.Client;

namespace SummaryService.Client;

/// <summary>Where the server is and how to identify to it, for a <see cref="SummaryClient"/> that opens its own channel.</summary>
public sealed class SummaryClientOptions
{
    /// <summary>The server's gRPC endpoint; the embedded default is plaintext HTTP/2 on loopback.</summary>
    public Uri Address { get; set; } = new("http://127.0.0.1:5170");

    /// <summary>
    /// API key sent on every call as <c>authorization: Bearer &lt;key&gt;</c>; null when the server
    /// runs without authentication.
    /// </summary>
    public string? ApiKey { get; set; }

    /// <summary>Channel settings (message sizes, HTTP handler, credentials for TLS); null for the defaults.</summary>
    public GrpcChannelOptions? ChannelOptions { get; set; }
}
