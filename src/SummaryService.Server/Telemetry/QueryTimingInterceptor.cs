using Grpc.Core;
using Grpc.Core.Interceptors;
using SummaryService.Contract.V1;

namespace SummaryService.Server.Telemetry;

/// <summary>
/// Times every answered unary query call into <c>summary.query.duration</c> under its method name
/// (<c>rpc.method</c>), so that no query handler times itself. Refused calls are not counted: the
/// histogram describes answers. A watch's updates are timed by the watch itself, one per update,
/// because an update is an answer but not a call.
/// </summary>
public sealed class QueryTimingInterceptor(ServerMetrics metrics, TimeProvider time) : Interceptor
{
    private static readonly string QueryPrefix = $"/{Query.Descriptor.FullName}/";

    /// <inheritdoc/>
    public override async Task<TResponse> UnaryServerHandler<TRequest, TResponse>(TRequest request, ServerCallContext context, UnaryServerMethod<TRequest, TResponse> continuation)
    {
        ArgumentNullException.ThrowIfNull(context);
        ArgumentNullException.ThrowIfNull(continuation);
        if (!context.Method.StartsWith(QueryPrefix, StringComparison.Ordinal))
        {
            return await continuation(request, context).ConfigureAwait(false);
        }

        long started = time.GetTimestamp();
        TResponse response = await continuation(request, context).ConfigureAwait(false);
        metrics.QueryAnswered(context.Method[QueryPrefix.Length..], ServerMetrics.Since(time, started));
        return response;
    }
}
