using Grpc.Core;
using Grpc.Core.Interceptors;
using SummaryService.Server.Diagnostics;
using SummaryService.Sketches.Serialization;
using SummaryService.Store;

namespace SummaryService.Server.Validation;

/// <summary>
/// The one place where anything a handler throws becomes a status: store refusals and malformed
/// sketches become the statuses of <see cref="RpcErrors"/>, every status leaves with text made safe
/// by <see cref="WireText"/>, and anything else — a server defect — becomes Internal, its stack
/// trace logged the first time that kind of failure happens rather than once per call.
/// </summary>
public sealed class ErrorMappingInterceptor(RefusalLog refusals, ILogger<ErrorMappingInterceptor> logger) : Interceptor
{
    /// <inheritdoc/>
    public override async Task<TResponse> UnaryServerHandler<TRequest, TResponse>(TRequest request, ServerCallContext context, UnaryServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            return await continuation(request, context).ConfigureAwait(false);
        }
        catch (Exception ex) when (Mapped(ex, context) is { } status)
        {
            throw status;
        }
    }

    /// <inheritdoc/>
    public override async Task<TResponse> ClientStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, ServerCallContext context, ClientStreamingServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            return await continuation(requestStream, context).ConfigureAwait(false);
        }
        catch (Exception ex) when (Mapped(ex, context) is { } status)
        {
            throw status;
        }
    }

    /// <inheritdoc/>
    public override async Task ServerStreamingServerHandler<TRequest, TResponse>(TRequest request, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, ServerStreamingServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            await continuation(request, responseStream, context).ConfigureAwait(false);
        }
        catch (Exception ex) when (Mapped(ex, context) is { } status)
        {
            throw status;
        }
    }

    /// <inheritdoc/>
    public override async Task DuplexStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, DuplexStreamingServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            await continuation(requestStream, responseStream, context).ConfigureAwait(false);
        }
        catch (Exception ex) when (Mapped(ex, context) is { } status)
        {
            throw status;
        }
    }

    // Null leaves the exception as it is: a cancelled call ends as the framework reports it.
    private RpcException? Mapped(Exception exception, ServerCallContext context)
    {
        RpcException? status = StatusOf(exception, context);
        if (status is not null)
        {
            context.UserState[RefusalLog.DetailItem] = status.Status.Detail;
        }

        return status;
    }

    private RpcException? StatusOf(Exception exception, ServerCallContext context)
    {
        switch (exception)
        {
            case RpcException status:
                return WireText.Safe(status);
            case StoreRejectedException rejection:
                return RpcErrors.From(rejection);
            case SketchFormatException malformed:
                return RpcErrors.From(malformed);
            case StorageUnavailableException unavailable:
                return new RpcException(new Status(StatusCode.Unavailable, WireText.Message(unavailable.Message)));
            case OperationCanceledException when context.CancellationToken.IsCancellationRequested:
                return null;
            default:
                if (refusals.FirstFailure(context.Method, exception))
                {
                    logger.LogError(exception, "{Method} failed; later failures of this kind are counted in the refusal summaries, not logged one by one.", context.Method);
                }

                return new RpcException(new Status(StatusCode.Internal, WireText.Message($"{context.Method} failed inside the server ({exception.GetType().Name}); the server log has the details.")));
        }
    }
}
