using System.Runtime.CompilerServices;
using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>The query helpers.</summary>
public sealed partial class SummaryClient
{
    /// <summary>
    /// The full descriptive summary of the selected series over <paramref name="window"/>, one group per
    /// combination of <see cref="SummarizeOptions.GroupBy"/> values. The reply's <c>covered</c> range is the
    /// window widened to whole buckets: the values counted are exactly those with timestamps inside it.
    /// </summary>
    public async Task<SummarizeReply> SummarizeAsync(Selector selector, SummaryWindow window, SummarizeOptions? options = null, CancellationToken cancellationToken = default) =>
        await Query.SummarizeAsync((options ?? new SummarizeOptions()).ToRequest(selector, window), cancellationToken: cancellationToken).ConfigureAwait(false);

    /// <summary>One summary per <paramref name="step"/> across <paramref name="window"/>, oldest first, for plots.</summary>
    public async Task<TimelineReply> TimelineAsync(Selector selector, SummaryWindow window, TimeSpan step, TimelineOptions? options = null, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(selector);
        var request = new TimelineRequest { Selector = selector, Window = window.ToContract(), Step = Duration.FromTimeSpan(step), Confidence = options?.Confidence ?? 0 };
        if (options?.Quantiles is { } quantiles)
        {
            request.Quantiles.AddRange(quantiles);
        }

        if (options?.GroupBy is { } groupBy)
        {
            request.GroupBy.AddRange(groupBy);
        }

        return await Query.TimelineAsync(request, cancellationToken: cancellationToken).ConfigureAwait(false);
    }

    /// <summary>
    /// The series of <paramref name="metric"/> (null: of every metric the key may read) with their counts,
    /// buckets and the span they cover; needs only the read scope.
    /// </summary>
    public async Task<IReadOnlyList<CatalogueEntry>> CatalogueAsync(string? metric = null, CancellationToken cancellationToken = default)
    {
        CatalogueReply reply = await Query.CatalogueAsync(new CatalogueRequest { Metric = metric ?? "" }, cancellationToken: cancellationToken).ConfigureAwait(false);
        return reply.Series;
    }

    /// <summary>
    /// The summary of the trailing <paramref name="last"/> re-evaluated every <paramref name="interval"/>,
    /// as an asynchronous sequence. It ends after <paramref name="maxUpdates"/> pushes (0: never) or when
    /// <paramref name="cancellationToken"/> fires, which ends enumeration quietly instead of throwing, since
    /// stopping a watch is the normal way to leave it.
    /// </summary>
    public async IAsyncEnumerable<SummarizeReply> WatchAsync(
        Selector selector,
        TimeSpan last,
        TimeSpan interval,
        SummarizeOptions? options = null,
        uint maxUpdates = 0,
        [EnumeratorCancellation] CancellationToken cancellationToken = default)
    {
        var request = new WatchRequest
        {
            Query = (options ?? new SummarizeOptions()).ToRequest(selector, SummaryWindow.Last(last)),
            Interval = Duration.FromTimeSpan(interval),
            MaxUpdates = maxUpdates,
        };
        using AsyncServerStreamingCall<SummarizeReply> call = Query.Watch(request, cancellationToken: cancellationToken);
        while (true)
        {
            bool more;
            try
            {
                more = await call.ResponseStream.MoveNext(cancellationToken).ConfigureAwait(false);
            }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.Cancelled && cancellationToken.IsCancellationRequested)
            {
                yield break;
            }
            catch (OperationCanceledException) when (cancellationToken.IsCancellationRequested)
            {
                yield break;
            }

            if (!more)
            {
                yield break;
            }

            yield return call.ResponseStream.Current;
        }
    }

    /// <summary>
    /// Side <paramref name="b"/> against the baseline <paramref name="a"/>: each quantile's shift with its
    /// bounds and whether it exceeds the combined error, and the Kolmogorov–Smirnov distance with its bounds.
    /// </summary>
    /// <param name="a">The baseline selection and window.</param>
    /// <param name="b">The selection and window compared with it.</param>
    /// <param name="quantiles">Probabilities whose shift is wanted; null for .5, .9, .99.</param>
    /// <param name="confidence">Confidence of every interval; null for 0.99.</param>
    /// <param name="cancellationToken">Cancels the call.</param>
    public async Task<CompareReply> CompareAsync(
        (Selector Selector, SummaryWindow Window) a,
        (Selector Selector, SummaryWindow Window) b,
        IReadOnlyList<double>? quantiles = null,
        double? confidence = null,
        CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(a.Selector);
        ArgumentNullException.ThrowIfNull(b.Selector);
        var request = new CompareRequest
        {
            A = new Side { Selector = a.Selector, Window = a.Window.ToContract() },
            B = new Side { Selector = b.Selector, Window = b.Window.ToContract() },
            Confidence = confidence ?? 0,
        };
        if (quantiles is not null)
        {
            request.Quantiles.AddRange(quantiles);
        }

        return await Query.CompareAsync(request, cancellationToken: cancellationToken).ConfigureAwait(false);
    }
}
