using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Mapping;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>The catalogue: a read like the other queries, so a read key finds the series it may query.</summary>
public sealed partial class QueryService
{
    /// <summary>
    /// The series of one metric, or of every metric the caller may read. A key limited to metric
    /// prefixes sees only the series inside them; naming a metric outside them is PermissionDenied.
    /// </summary>
    public override async Task<CatalogueReply> Catalogue(CatalogueRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        CallerAccess access = CallerAccess.Of(context);
        string? metric = string.IsNullOrEmpty(request.Metric) ? null : request.Metric;
        if (metric is not null)
        {
            access.Require(Scope.Read, metric, "metric");
        }

        var reply = new CatalogueReply();
        foreach (SeriesInfo info in (await store.ListSeriesAsync(metric, context.CancellationToken).ConfigureAwait(false)).Where(s => access.Covers(s.Key.Metric)))
        {
            var entry = new CatalogueEntry { Metric = info.Key.Metric, Count = (ulong)info.Count, Extent = SummaryMapping.ToProto(info.Extent), Buckets = (uint)info.Buckets };
            entry.Labels.Add(info.Key.Labels.ToDictionary(l => l.Key, l => l.Value, StringComparer.Ordinal));
            reply.Series.Add(entry);
        }

        return reply;
    }
}
