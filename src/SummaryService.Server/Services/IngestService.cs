using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Hosting;
using SummaryService.Server.Mapping;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Sketches.Serialization;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// Ingest RPCs. Each batch is checked for access, then handed to the store, which validates it
/// whole; so a refused batch, for whatever reason, changes nothing.
/// </summary>
public sealed class IngestService(StoreHost host, ServerMetrics metrics, IHostApplicationLifetime lifetime) : Ingest.IngestBase
{
    /// <inheritdoc/>
    public override Task<PushReply> Push(Batch request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).Require(Scope.Write, request.Metric, "metric");
        return ApplyAsync(request, context.CancellationToken);
    }

    /// <summary>
    /// One reply per batch, in order. A refused batch gets an error reply and the stream goes on.
    /// When the host stops, the batch in hand is finished and answered, then the stream ends cleanly.
    /// </summary>
    public override async Task PushStream(IAsyncStreamReader<Batch> requestStream, IServerStreamWriter<PushReply> responseStream, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(requestStream);
        ArgumentNullException.ThrowIfNull(responseStream);
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess access = CallerAccess.Of(context);
        using var reading = CancellationTokenSource.CreateLinkedTokenSource(context.CancellationToken, lifetime.ApplicationStopping);
        try
        {
            await foreach (Batch batch in requestStream.ReadAllAsync(reading.Token).ConfigureAwait(false))
            {
                PushReply reply;
                try
                {
                    access.Require(Scope.Write, batch.Metric, "metric");
                    reply = await ApplyAsync(batch, context.CancellationToken).ConfigureAwait(false);
                }
                catch (StoreRejectedException ex)
                {
                    reply = ErrorReply(batch.Sequence, RpcErrors.CodeOf(ex), ex.Message, ex.Field);
                }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.PermissionDenied)
                {
                    metrics.BatchRejected("PermissionDenied");
                    reply = ErrorReply(batch.Sequence, ex.StatusCode, ex.Status.Detail, "metric");
                }

                await responseStream.WriteAsync(reply, context.CancellationToken).ConfigureAwait(false);
            }
        }
        catch (OperationCanceledException) when (lifetime.ApplicationStopping.IsCancellationRequested && !context.CancellationToken.IsCancellationRequested)
        {
            // Draining on shutdown: every batch read so far has been answered.
        }
    }

    /// <inheritdoc/>
    public override async Task<PushReply> PushSketch(Contract.V1.SketchUpload request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).Require(Scope.Write, request.Metric, "metric");
        Store.SketchUpload upload;
        try
        {
            upload = IngestMapping.ToStore(request);
        }
        catch (SketchFormatException)
        {
            metrics.BatchRejected("MalformedSketch");
            throw;
        }

        try
        {
            AppendResult result = await host.Store.MergeSketchAsync(upload, context.CancellationToken).ConfigureAwait(false);
            metrics.ValuesIngested(result.Accepted);
            return new PushReply { Sequence = request.Sequence, Accepted = (ulong)result.Accepted, Duplicate = result.Duplicate };
        }
        catch (StoreRejectedException ex)
        {
            metrics.BatchRejected(ex.Reason.ToString());
            throw;
        }
    }

    private async Task<PushReply> ApplyAsync(Batch batch, CancellationToken cancellationToken)
    {
        try
        {
            AppendResult result = await host.Store.AppendAsync(IngestMapping.ToStore(batch), cancellationToken).ConfigureAwait(false);
            metrics.ValuesIngested(result.Accepted);
            return new PushReply { Sequence = batch.Sequence, Accepted = (ulong)result.Accepted, Duplicate = result.Duplicate };
        }
        catch (StoreRejectedException ex)
        {
            metrics.BatchRejected(ex.Reason.ToString());
            throw;
        }
    }

    private static PushReply ErrorReply(ulong sequence, StatusCode code, string message, string field) =>
        new() { Sequence = sequence, ErrorCode = code.ToString(), Error = message, ErrorField = field };
}
