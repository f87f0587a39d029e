using Grpc.Core;
using Grpc.Core.Interceptors;
using SummaryService.Sketches.Serialization;
using SummaryService.Store;

namespace SummaryService.Server.Validation;

/// <summary>
/// Turns store refusals and malformed sketches thrown anywhere in a handler into the gRPC status
/// of <see cref="RpcErrors"/>, so services only throw and never build statuses for store errors.
/// </summary>
public sealed class ErrorMappingInterceptor : Interceptor
{
    /// <inheritdoc/>
    public override async Task<TResponse> UnaryServerHandler<TRequest, TResponse>(TRequest request, ServerCallContext context, UnaryServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            return await continuation(request, context).ConfigureAwait(false);
        }
        catch (StoreRejectedException ex)
        {
            throw RpcErrors.From(ex);
        }
        catch (SketchFormatException ex)
        {
            throw RpcErrors.From(ex);
        }
    }

    /// <inheritdoc/>
    public override async Task ServerStreamingServerHandler<TRequest, TResponse>(TRequest request, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, ServerStreamingServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            await continuation(request, responseStream, context).ConfigureAwait(false);
        }
        catch (StoreRejectedException ex)
        {
            throw RpcErrors.From(ex);
        }
    }

    /// <inheritdoc/>
    public override async Task DuplexStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, DuplexStreamingServerMethod<TRequest, TResponse> continuation)
    {
        try
        {
            await continuation(requestStream, responseStream, context).ConfigureAwait(false);
        }
        catch (StoreRejectedException ex)
        {
            throw RpcErrors.From(ex);
        }
    }
}
