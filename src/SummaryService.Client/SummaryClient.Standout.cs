using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>Which group stands out.</summary>
public sealed partial class SummaryClient
{
    /// <summary>
    /// Every value of the label <paramref name="splitBy"/> among the selected series, compared with the
    /// merge of all the others and ranked strongest first; groups too small to judge come apart in
    /// <c>unranked</c>. Each group says how many series (and values) it and its rest merged.
    /// </summary>
    public async Task<StandoutReply> StandoutAsync(Selector selector, string splitBy, SummaryWindow window, StandoutOptions? options = null, CancellationToken cancellationToken = default) =>
        await Query.StandoutAsync((options ?? new StandoutOptions()).ToRequest(selector, splitBy, window), cancellationToken: cancellationToken).ConfigureAwait(false);
}
