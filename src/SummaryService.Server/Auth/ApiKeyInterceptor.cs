using Grpc.Core;
using Grpc.Core.Interceptors;

namespace SummaryService.Server.Auth;

/// <summary>
/// Authenticates every call to the summary services from its <c>authorization: Bearer &lt;key&gt;</c>
/// header and checks the scope the service needs; metric prefixes are checked by the services,
/// which know the metric. Health and reflection stay open so probes and tools work without a key.
/// </summary>
public sealed class ApiKeyInterceptor(ApiKeyRegistry registry) : Interceptor
{
    /// <inheritdoc/>
    public override Task<TResponse> UnaryServerHandler<TRequest, TResponse>(TRequest request, ServerCallContext context, UnaryServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(request, context);
    }

    /// <inheritdoc/>
    public override Task<TResponse> ClientStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, ServerCallContext context, ClientStreamingServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(requestStream, context);
    }

    /// <inheritdoc/>
    public override Task ServerStreamingServerHandler<TRequest, TResponse>(TRequest request, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, ServerStreamingServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(request, responseStream, context);
    }

    /// <inheritdoc/>
    public override Task DuplexStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, DuplexStreamingServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(requestStream, responseStream, context);
    }

    /// <summary>
    /// The scope a method of the contract needs, from its service name alone: every Ingest call
    /// writes (and so does an OTLP metrics export), every Query call (the catalogue included) reads,
    /// every Admin call is upkeep; health and reflection need none.
    /// </summary>
    internal static Scope ScopeOf(string method) => method switch
    {
        _ when method.StartsWith("/summary.v1.Ingest/", StringComparison.Ordinal) => Scope.Write,
        _ when method.StartsWith("/summary.v1.Query/", StringComparison.Ordinal) => Scope.Read,
        _ when method.StartsWith("/summary.v1.Admin/", StringComparison.Ordinal) => Scope.Admin,
        _ when method.StartsWith("/opentelemetry.proto.collector.metrics.v1.MetricsService/", StringComparison.Ordinal) => Scope.Write,
        _ => Scope.None,
    };

    private void Authenticate(ServerCallContext context)
    {
        if (!registry.Enabled || ScopeOf(context.Method) == Scope.None)
        {
            return;
        }

        string? header = context.RequestHeaders.GetValue("authorization");
        if (header is null || !header.StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase) || header.Length <= 7)
        {
            throw new RpcException(new Status(StatusCode.Unauthenticated, "authorization header missing; send 'authorization: Bearer <key>'."));
        }

        CallerAccess access = registry.Find(header[7..].Trim())
            ?? throw new RpcException(new Status(StatusCode.Unauthenticated, "the API key is not known to this server."));
        Scope needed = ScopeOf(context.Method);
        if ((access.Scopes & needed) == 0)
        {
            throw new RpcException(new Status(StatusCode.PermissionDenied, $"key '{access.Name}' lacks the {needed.ToString().ToLowerInvariant()} scope that {context.Method} needs."));
        }

        access.AttachTo(context);
    }
}
