using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Validation;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// Admin RPCs: upkeep of the store, all needing the admin scope. A key limited to metric prefixes
/// removes only its own series, and cannot run store-wide operations.
/// </summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<Admin.AdminBase>), nameof(DecodeCheckedBinding<Admin.AdminBase>.BindService))]
public sealed class AdminService(ISeriesStore store, IStoreMaintenance upkeep) : Admin.AdminBase
{
    /// <inheritdoc/>
    public override async Task<RemoveSeriesReply> RemoveSeries(RemoveSeriesRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        if (string.IsNullOrEmpty(request.Metric))
        {
            throw RpcErrors.Invalid("metric", "metric is empty; name the series to remove.");
        }

        CallerAccess.Of(context).Require(Scope.Admin, request.Metric, "metric");
        var key = new SeriesKey(request.Metric, request.Labels);
        SeriesInfo removed = await store.RemoveAsync(key, context.CancellationToken).ConfigureAwait(false)
            ?? throw RpcErrors.NotFound("metric", $"no series {key}; give the metric and its full label set.");
        return new RemoveSeriesReply { Count = (ulong)removed.Count };
    }

    /// <inheritdoc/>
    public override async Task<WriteSnapshotReply> WriteSnapshot(WriteSnapshotRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).RequireAllMetrics(Scope.Admin, nameof(WriteSnapshot));
        SnapshotInfo info = await upkeep.WriteSnapshotAsync(context.CancellationToken).ConfigureAwait(false)
            ?? throw new RpcException(new Status(StatusCode.FailedPrecondition, "Persistence:Durability is None; this server keeps no snapshots."));
        return new WriteSnapshotReply { Generation = info.Generation, Series = (uint)info.Series, Bytes = (ulong)info.Bytes, Elapsed = Duration.FromTimeSpan(info.Elapsed) };
    }

    /// <inheritdoc/>
    public override async Task<HoldingsReply> Holdings(HoldingsRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).RequireAllMetrics(Scope.Admin, nameof(Holdings));
        StoreStats stats = await store.GetStatsAsync(context.CancellationToken).ConfigureAwait(false);
        var reply = new HoldingsReply { Series = (uint)stats.Series, Buckets = (ulong)stats.Buckets, EstimatedBytes = (ulong)stats.EstimatedBytes, Durability = upkeep.Durability.ToString(), ProducerMarks = (uint)stats.ProducerMarks };
        reply.Tiers.AddRange(stats.Tiers.Select(t => new TierHoldings { BucketWidth = Duration.FromTimeSpan(t.BucketWidth), Buckets = (ulong)t.Buckets, EstimatedBytes = (ulong)t.EstimatedBytes }));
        reply.Shards.AddRange(stats.Partitions.Select(s => new ShardHoldings { Shard = (uint)s.Partition, Series = (uint)s.Series, Buckets = (ulong)s.Buckets, EstimatedBytes = (ulong)Math.Max(0, s.EstimatedBytes), Node = s.Node ?? "" }));
        reply.Nodes.AddRange(stats.Partitions.Where(s => s.Node is not null).GroupBy(s => s.Node!, StringComparer.Ordinal).OrderBy(n => n.Key, StringComparer.Ordinal).Select(n => new NodeHoldings
        {
            Node = n.Key,
            Partitions = (uint)n.Count(),
            Series = (uint)n.Sum(s => s.Series),
            Buckets = (ulong)n.Sum(s => s.Buckets),
            EstimatedBytes = (ulong)Math.Max(0, n.Sum(s => s.EstimatedBytes)),
        }));
        return reply;
    }
}
