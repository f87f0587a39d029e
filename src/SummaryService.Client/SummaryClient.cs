using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract;
using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>
/// Typed access to a SummaryService server over one <see cref="GrpcChannel"/>: window summaries,
/// per-step timelines, watches, comparisons, the catalogue and the upkeep calls, each a thin wrapper that builds the
/// contract request and returns the contract reply, so every figure and bound the server sends is
/// available as documented in <c>protos/summary/v1</c>.
/// </summary>
/// <remarks>
/// Errors are not translated: a refused call throws the <see cref="RpcException"/> gRPC produced,
/// whose <see cref="RpcException.StatusCode"/> (<c>InvalidArgument</c>, <c>NotFound</c>,
/// <c>Unauthenticated</c>, <c>PermissionDenied</c>, <c>ResourceExhausted</c>, <c>Unavailable</c> …)
/// and <see cref="Status.Detail"/> (naming the field and value at fault) are what callers branch on
/// and show. Wrapping them would only hide the status other gRPC tooling already understands.
/// Instances are thread-safe; share one per server.
/// </remarks>
public sealed partial class SummaryClient : IDisposable
{
    private readonly GrpcChannel? _ownedChannel;

    /// <summary>Opens a channel to <see cref="SummaryClientOptions.Address"/>; the client owns and disposes it.</summary>
    public SummaryClient(SummaryClientOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(options.Address);
        _ownedChannel = GrpcChannel.ForAddress(options.Address, options.ChannelOptions ?? new GrpcChannelOptions());
        CallInvoker = ApiKeyHeader.Wrap(_ownedChannel.CreateCallInvoker(), options.ApiKey);
        Ingest = new Ingest.IngestClient(CallInvoker);
        Query = new Query.QueryClient(CallInvoker);
        Admin = new Admin.AdminClient(CallInvoker);
    }

    /// <summary>Borrows <paramref name="channel"/>: the caller keeps ownership and disposes it after the client.</summary>
    /// <param name="channel">An open channel to the server.</param>
    /// <param name="apiKey">Sent as <c>authorization: Bearer &lt;key&gt;</c>; null when the server runs without keys.</param>
    public SummaryClient(GrpcChannel channel, string? apiKey = null)
    {
        ArgumentNullException.ThrowIfNull(channel);
        CallInvoker = ApiKeyHeader.Wrap(channel.CreateCallInvoker(), apiKey);
        Ingest = new Ingest.IngestClient(CallInvoker);
        Query = new Query.QueryClient(CallInvoker);
        Admin = new Admin.AdminClient(CallInvoker);
    }

    /// <summary>The invoker every call goes through (the key header already attached), for generated clients of your own.</summary>
    public CallInvoker CallInvoker { get; }

    /// <summary>The generated ingest client, for calls the helpers do not cover.</summary>
    public Ingest.IngestClient Ingest { get; }

    /// <summary>The generated query client, for calls the helpers do not cover.</summary>
    public Query.QueryClient Query { get; }

    /// <summary>The generated admin client, for calls the helpers do not cover.</summary>
    public Admin.AdminClient Admin { get; }

    /// <summary>Disposes the channel when this client opened it; a borrowed channel is left open.</summary>
    public void Dispose() => _ownedChannel?.Dispose();
}
