using Grpc.Core;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Server.Auth;
using SummaryService.Server.Validation;

namespace SummaryService.Server.Otlp;

/// <summary>
/// OTLP/gRPC metrics in: <c>/opentelemetry.proto.collector.metrics.v1.MetricsService/Export</c> on the
/// gRPC endpoint, with the write scope and the same interceptors as the summary services.
/// </summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<MetricsService.MetricsServiceBase>), nameof(DecodeCheckedBinding<MetricsService.MetricsServiceBase>.BindService))]
public sealed class OtlpMetricsService(OtlpReceiver receiver) : MetricsService.MetricsServiceBase
{
    /// <inheritdoc/>
    public override Task<ExportMetricsServiceResponse> Export(ExportMetricsServiceRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        return receiver.ExportAsync(request, CallerAccess.Of(context), context.CancellationToken);
    }
}
