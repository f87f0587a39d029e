using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Hosting;
using SummaryService.Server.Mapping;
using SummaryService.Server.Validation;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// Admin RPCs. Listing needs the read scope, the others admin. A key limited to metric prefixes
/// sees and deletes only its own series, and cannot run store-wide operations.
/// </summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<Admin.AdminBase>), nameof(DecodeCheckedBinding<Admin.AdminBase>.BindService))]
public sealed class AdminService(StoreHost host) : Admin.AdminBase
{
    /// <inheritdoc/>
    public override Task<ListSeriesReply> ListSeries(ListSeriesRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        CallerAccess access = CallerAccess.Of(context);
        string? metric = string.IsNullOrEmpty(request.Metric) ? null : request.Metric;
        if (metric is not null)
        {
            access.Require(Scope.Read, metric, "metric");
        }

        var reply = new ListSeriesReply();
        foreach (SeriesInfo info in host.Store.ListSeries(metric).Where(s => access.Covers(s.Key.Metric)))
        {
            var entry = new SeriesEntry { Metric = info.Key.Metric, Count = (ulong)info.Count, Extent = SummaryMapping.ToProto(info.Extent), Buckets = (uint)info.Buckets };
            entry.Labels.Add(info.Key.Labels.ToDictionary(l => l.Key, l => l.Value, StringComparer.Ordinal));
            reply.Series.Add(entry);
        }

        return Task.FromResult(reply);
    }

    /// <inheritdoc/>
    public override Task<DeleteSeriesReply> DeleteSeries(DeleteSeriesRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        if (string.IsNullOrEmpty(request.Metric))
        {
            throw RpcErrors.Invalid("metric", "metric is empty; name the series to delete.");
        }

        CallerAccess.Of(context).Require(Scope.Admin, request.Metric, "metric");
        var key = new SeriesKey(request.Metric, request.Labels);
        long count = host.Store.ListSeries(request.Metric).FirstOrDefault(s => s.Key.Equals(key))?.Count ?? 0;
        if (!host.Store.Delete(key))
        {
            throw RpcErrors.NotFound("metric", $"no series {key}; give the metric and its full label set.");
        }

        return Task.FromResult(new DeleteSeriesReply { Count = (ulong)count });
    }

    /// <inheritdoc/>
    public override async Task<TakeSnapshotReply> TakeSnapshot(TakeSnapshotRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).RequireAllMetrics(Scope.Admin, "TakeSnapshot");
        SnapshotInfo info = await host.TakeSnapshotAsync(context.CancellationToken).ConfigureAwait(false)
            ?? throw new RpcException(new Status(StatusCode.FailedPrecondition, "Persistence:Durability is None; this server keeps no snapshots."));
        return new TakeSnapshotReply { Generation = info.Generation, Series = (uint)info.Series, Bytes = (ulong)info.Bytes, Elapsed = Duration.FromTimeSpan(info.Elapsed) };
    }

    /// <inheritdoc/>
    public override Task<GetStatsReply> GetStats(GetStatsRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).RequireAllMetrics(Scope.Admin, "GetStats");
        StoreStats stats = host.Store.GetStats();
        var reply = new GetStatsReply { Series = (uint)stats.Series, Buckets = (ulong)stats.Buckets, EstimatedBytes = (ulong)stats.EstimatedBytes, Durability = host.Durability.ToString(), ProducerMarks = (uint)stats.ProducerMarks };
        reply.Tiers.AddRange(stats.Tiers.Select(t => new Contract.V1.TierStats { BucketWidth = Duration.FromTimeSpan(t.BucketWidth), Buckets = (ulong)t.Buckets, EstimatedBytes = (ulong)t.EstimatedBytes }));
        reply.Shards.AddRange(stats.Shards.Select(s => new Contract.V1.ShardStats { Shard = (uint)s.Shard, Series = (uint)s.Series, Buckets = (ulong)s.Buckets, EstimatedBytes = (ulong)Math.Max(0, s.EstimatedBytes) }));
        return Task.FromResult(reply);
    }
}
