using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>The catalogue and admin helpers.</summary>
public sealed partial class SummaryClient
{
    /// <summary>The series of <paramref name="metric"/> (null: of every metric the key may read), ordered by their key.</summary>
    public async Task<IReadOnlyList<SeriesEntry>> ListSeriesAsync(string? metric = null, CancellationToken cancellationToken = default)
    {
        ListSeriesReply reply = await Admin.ListSeriesAsync(new ListSeriesRequest { Metric = metric ?? "" }, cancellationToken: cancellationToken).ConfigureAwait(false);
        return reply.Series;
    }

    /// <summary>Series, buckets and estimated memory, in total, per tier and per shard; needs the admin scope.</summary>
    public async Task<GetStatsReply> GetStatsAsync(CancellationToken cancellationToken = default) =>
        await Admin.GetStatsAsync(new GetStatsRequest(), cancellationToken: cancellationToken).ConfigureAwait(false);

    /// <summary>Writes a snapshot now; fails with <c>FailedPrecondition</c> when the server keeps nothing on disk.</summary>
    public async Task<TakeSnapshotReply> TakeSnapshotAsync(CancellationToken cancellationToken = default) =>
        await Admin.TakeSnapshotAsync(new TakeSnapshotRequest(), cancellationToken: cancellationToken).ConfigureAwait(false);

    /// <summary>
    /// Removes the one series with exactly this metric and label set and returns how many values it held;
    /// <c>NotFound</c> when there is no such series (a selector would be too easy to get wrong for a removal).
    /// </summary>
    public async Task<ulong> DeleteSeriesAsync(string metric, IReadOnlyDictionary<string, string>? labels = null, CancellationToken cancellationToken = default)
    {
        ArgumentException.ThrowIfNullOrEmpty(metric);
        var request = new DeleteSeriesRequest { Metric = metric };
        if (labels is not null)
        {
            foreach (var (name, value) in labels)
            {
                request.Labels[name] = value;
            }
        }

        DeleteSeriesReply reply = await Admin.DeleteSeriesAsync(request, cancellationToken: cancellationToken).ConfigureAwait(false);
        return reply.Count;
    }
}
