using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Hosting;
using SummaryService.Server.Validation;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// Admin RPCs: upkeep of the store, all needing the admin scope. A key limited to metric prefixes
/// removes only its own series, and cannot run store-wide operations.
/// </summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<Admin.AdminBase>), nameof(DecodeCheckedBinding<Admin.AdminBase>.BindService))]
public sealed class AdminService(StoreHost host) : Admin.AdminBase
{
    /// <inheritdoc/>
    public override Task<RemoveSeriesReply> RemoveSeries(RemoveSeriesRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        if (string.IsNullOrEmpty(request.Metric))
        {
            throw RpcErrors.Invalid("metric", "metric is empty; name the series to remove.");
        }

        CallerAccess.Of(context).Require(Scope.Admin, request.Metric, "metric");
        var key = new SeriesKey(request.Metric, request.Labels);
        long count = host.Store.ListSeries(request.Metric).FirstOrDefault(s => s.Key.Equals(key))?.Count ?? 0;
        if (!host.Store.Delete(key))
        {
            throw RpcErrors.NotFound("metric", $"no series {key}; give the metric and its full label set.");
        }

        return Task.FromResult(new RemoveSeriesReply { Count = (ulong)count });
    }

    /// <inheritdoc/>
    public override async Task<WriteSnapshotReply> WriteSnapshot(WriteSnapshotRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).RequireAllMetrics(Scope.Admin, nameof(WriteSnapshot));
        SnapshotInfo info = await host.TakeSnapshotAsync(context.CancellationToken).ConfigureAwait(false)
            ?? throw new RpcException(new Status(StatusCode.FailedPrecondition, "Persistence:Durability is None; this server keeps no snapshots."));
        return new WriteSnapshotReply { Generation = info.Generation, Series = (uint)info.Series, Bytes = (ulong)info.Bytes, Elapsed = Duration.FromTimeSpan(info.Elapsed) };
    }

    /// <inheritdoc/>
    public override Task<HoldingsReply> Holdings(HoldingsRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        CallerAccess.Of(context).RequireAllMetrics(Scope.Admin, nameof(Holdings));
        StoreStats stats = host.Store.GetStats();
        var reply = new HoldingsReply { Series = (uint)stats.Series, Buckets = (ulong)stats.Buckets, EstimatedBytes = (ulong)stats.EstimatedBytes, Durability = host.Durability.ToString(), ProducerMarks = (uint)stats.ProducerMarks };
        reply.Tiers.AddRange(stats.Tiers.Select(t => new TierHoldings { BucketWidth = Duration.FromTimeSpan(t.BucketWidth), Buckets = (ulong)t.Buckets, EstimatedBytes = (ulong)t.EstimatedBytes }));
        reply.Shards.AddRange(stats.Shards.Select(s => new ShardHoldings { Shard = (uint)s.Shard, Series = (uint)s.Series, Buckets = (ulong)s.Buckets, EstimatedBytes = (ulong)Math.Max(0, s.EstimatedBytes) }));
        return Task.FromResult(reply);
    }
}
