using Grpc.Core;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Server.Auth;
using SummaryService.Server.Hosting;
using SummaryService.Server.Services;
using SummaryService.Server.Telemetry;
using SummaryService.Store;

namespace SummaryService.Server.Otlp;

/// <summary>
/// One OTLP export, whichever transport brought it: access for every metric, the protocol's rules,
/// the ingest budget, then each series' values and each histogram sketch through the same store calls
/// as <c>Push</c> and <c>PushSketch</c>. The reply is sent once everything taken is durable; what
/// was not taken is counted in the partial-success reply with the first reasons.
/// </summary>
public sealed class OtlpReceiver(ISeriesStore store, ServerMetrics metrics, IngestBudget budget, MetricsTranslator translator)
{
    /// <summary>Applies the export, or throws an <see cref="RpcException"/> before anything changes.</summary>
    public async Task<ExportMetricsServiceResponse> ExportAsync(ExportMetricsServiceRequest request, CallerAccess access, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(access);
        access.Require(Scope.Write, "", "MetricsService/Export");
        foreach (var (name, field) in MetricsTranslator.Names(request))
        {
            access.Require(Scope.Write, name, field);
        }

        MetricsTranslator.Check(request);
        long bytes = request.CalculateSize();
        if (!budget.TryTake(bytes))
        {
            metrics.BatchRejected("Overload");
            throw new RpcException(new Status(StatusCode.ResourceExhausted, $"the server holds {budget.Held} bytes of batches not yet answered, its limit (Server:MaxIngestBytesHeld); send this export again after a short wait."));
        }

        try
        {
            ExportPlan plan = translator.Plan(request);
            await ApplyAsync(plan, cancellationToken).ConfigureAwait(false);
            return ResponseOf(plan.Rejections);
        }
        finally
        {
            budget.Give(bytes);
        }
    }

    // Every write is started first (the store applies at once and returns a task for durability), so
    // one export waits for one group commit rather than one per series.
    private async Task ApplyAsync(ExportPlan plan, CancellationToken cancellationToken)
    {
        var writes = new List<(Task<AppendResult> Durable, long Points, string Metric)>();
        foreach (PlannedValues values in plan.Values)
        {
            writes.Add((store.AppendAsync(values.ToBatch(), cancellationToken).AsTask(), values.Values.Count, values.Metric));
        }

        foreach (PlannedSketch sketch in plan.Sketches)
        {
            writes.Add((store.MergeSketchAsync(sketch.Upload, cancellationToken).AsTask(), 1, sketch.Upload.Metric));
        }

        int unavailable = 0;
        foreach (var (durable, points, metric) in writes)
        {
            try
            {
                AppendResult result = await durable.ConfigureAwait(false);
                metrics.ValuesIngested(result.Accepted);
            }
            catch (StoreRejectedException ex)
            {
                metrics.BatchRejected(ex.Reason.ToString());
                plan.Rejections.Reject(points, $"metric '{metric}': {ex.Message.TrimEnd('.')}");
            }
            catch (StorageUnavailableException ex)
            {
                metrics.BatchRejected("StorageUnavailable");
                unavailable++;
                plan.Rejections.Reject(points, $"metric '{metric}': {ex.Message.TrimEnd('.')}");
            }
        }

        // Nothing was taken: the exporter may send the whole export again without counting anything twice.
        if (unavailable > 0 && unavailable == writes.Count)
        {
            throw new RpcException(new Status(StatusCode.Unavailable, "the server cannot write its log just now; nothing of this export was applied, send it again later."));
        }
    }

    private static ExportMetricsServiceResponse ResponseOf(PointRejections rejections)
    {
        var response = new ExportMetricsServiceResponse();
        string message = rejections.Message();
        if (rejections.Count > 0 || message.Length > 0)
        {
            response.PartialSuccess = new ExportMetricsPartialSuccess { RejectedDataPoints = rejections.Count, ErrorMessage = message };
        }

        return response;
    }
}
