using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Mapping;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Sketches.Serialization;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// Ingest RPCs. Each batch is checked for access, then handed to the store, which validates it
/// whole; so a refused batch, for whatever reason, changes nothing. The producer stream's ordering
/// and shutdown belong to <see cref="PushStreamSession"/>.
/// </summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<Ingest.IngestBase>), nameof(DecodeCheckedBinding<Ingest.IngestBase>.BindService))]
public sealed class IngestService(ISeriesStore store, ServerMetrics metrics, IHostApplicationLifetime lifetime, IngestBudget budget) : Ingest.IngestBase
{
    /// <inheritdoc/>
    public override Task<PushReply> Push(Batch request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).Require(Scope.Write, request.Metric, "metric");
        return WithinBudgetAsync(request.CalculateSize(), () => ApplyAsync(request, context.CancellationToken));
    }

    /// <inheritdoc cref="PushStreamSession"/>
    public override Task PushStream(IAsyncStreamReader<Batch> requestStream, IServerStreamWriter<PushReply> responseStream, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(requestStream);
        ArgumentNullException.ThrowIfNull(responseStream);
        ArgumentNullException.ThrowIfNull(context);
        return new PushStreamSession(ApplyAsync, budget, metrics, lifetime.ApplicationStopping).RunAsync(requestStream, responseStream, context);
    }

    /// <inheritdoc/>
    public override Task<PushReply> PushSketch(SketchUpload request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).Require(Scope.Write, request.Metric, "metric");
        return WithinBudgetAsync(request.CalculateSize(), () => MergeAsync(request, context.CancellationToken));
    }

    // A unary push is refused at once when the server already holds its budget of unanswered batches.
    private async Task<PushReply> WithinBudgetAsync(long bytes, Func<Task<PushReply>> apply)
    {
        if (!budget.TryTake(bytes))
        {
            metrics.BatchRejected("Overload");
            throw new RpcException(new Status(StatusCode.ResourceExhausted, $"the server holds {budget.Held} bytes of batches not yet answered, its limit (Server:MaxIngestBytesHeld); send this one again after a short wait."));
        }

        try
        {
            return await apply().ConfigureAwait(false);
        }
        finally
        {
            budget.Give(bytes);
        }
    }

    private async Task<PushReply> MergeAsync(SketchUpload request, CancellationToken cancellationToken)
    {
        UploadedSketch upload;
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
            AppendResult result = await store.MergeSketchAsync(upload, cancellationToken).ConfigureAwait(false);
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
            using var rented = new RentedBatch(batch);
            AppendResult result = await store.AppendAsync(rented.Batch, cancellationToken).ConfigureAwait(false);
            metrics.ValuesIngested(result.Accepted);
            return new PushReply { Sequence = batch.Sequence, Accepted = (ulong)result.Accepted, Duplicate = result.Duplicate };
        }
        catch (StoreRejectedException ex)
        {
            metrics.BatchRejected(ex.Reason.ToString());
            throw;
        }
        catch (StorageUnavailableException)
        {
            metrics.BatchRejected("StorageUnavailable");
            throw;
        }
    }
}
