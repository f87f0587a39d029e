using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>The upkeep helpers; every one needs the admin scope.</summary>
public sealed partial class SummaryClient
{
    /// <summary>Series, buckets and estimated memory the store holds, in total, per tier and per shard.</summary>
    public async Task<HoldingsReply> HoldingsAsync(CancellationToken cancellationToken = default) =>
        await Admin.HoldingsAsync(new HoldingsRequest(), cancellationToken: cancellationToken).ConfigureAwait(false);

    /// <summary>Writes a snapshot now; fails with <c>FailedPrecondition</c> when the server keeps nothing on disk.</summary>
    public async Task<WriteSnapshotReply> WriteSnapshotAsync(CancellationToken cancellationToken = default) =>
        await Admin.WriteSnapshotAsync(new WriteSnapshotRequest(), cancellationToken: cancellationToken).ConfigureAwait(false);

    /// <summary>
    /// Removes the one series with exactly this metric and label set and returns how many values it held;
    /// <c>NotFound</c> when there is no such series (a selector would be too easy to get wrong for a removal).
    /// </summary>
    public async Task<ulong> RemoveSeriesAsync(string metric, IReadOnlyDictionary<string, string>? labels = null, CancellationToken cancellationToken = default)
    {
        ArgumentException.ThrowIfNullOrEmpty(metric);
        var request = new RemoveSeriesRequest { Metric = metric };
        if (labels is not null)
        {
            foreach (var (name, value) in labels)
            {
                request.Labels[name] = value;
            }
        }

        RemoveSeriesReply reply = await Admin.RemoveSeriesAsync(request, cancellationToken: cancellationToken).ConfigureAwait(false);
        return reply.Count;
    }
}
