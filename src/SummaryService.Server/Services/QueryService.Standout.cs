using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Mapping;
using SummaryService.Server.Validation;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>Which group stands out: every value of one label against the merge of all the others.</summary>
public sealed partial class QueryService
{
    /// <summary>
    /// Ranks the values of <c>split_by</c> by how far each group departs from the rest (with
    /// <c>before</c>: by how much each moved against the rest). Series lacking the label join every
    /// rest and no group. Every field is checked before the store is read.
    /// </summary>
    public override async Task<StandoutReply> Standout(StandoutRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        long now = NowMs();
        SeriesSelector selector = Readable(request.Selector, "selector", context);
        string splitBy = StandoutRequests.SplitByOf(request.SplitBy);
        TimeWindow window = QueryRequests.WindowOf(request.Window, "window", now);
        TimeWindow? before = request.Before is null ? null : QueryRequests.WindowOf(request.Before, "before", now);
        StandoutOptions options = StandoutRequests.OptionsOf(request);

        var (groups, shared, sharedSeries, read) = await SplitAsync(selector, splitBy, window, request.AcceptPartial, context).ConfigureAwait(false);
        WindowSketches? readBefore = null;
        StandoutBaseline? baseline = null;
        TimeWindow coveredBefore = default;
        if (before is { } earlier)
        {
            (var groupsBefore, var sharedBefore, int sharedSeriesBefore, readBefore) = await SplitAsync(selector, splitBy, earlier, request.AcceptPartial, context).ConfigureAwait(false);
            coveredBefore = readBefore.Covered;
            baseline = new StandoutBaseline(groupsBefore, sharedBefore, sharedSeriesBefore);
        }

        StandoutReply reply = StandoutMapping.ToProto(SplitComparison.Rank(groups, shared, sharedSeries, options, baseline), options);
        reply.Covered = SummaryMapping.ToProto(read.Covered);
        reply.Coverage = CoverageMapping.ToProto(readBefore is null ? [read] : [read, readBefore]);
        reply.CoveredBefore = before is null ? null : SummaryMapping.ToProto(coveredBefore);
        reply.UnsplitSeries = (uint)sharedSeries;
        return reply;
    }

    // One window's groups by the label's value; series without the label are kept apart.
    private async Task<(List<StandoutInput> Groups, SeriesSketch? Shared, int SharedSeries, WindowSketches Read)> SplitAsync(SeriesSelector selector, string splitBy, TimeWindow window, bool acceptPartial, ServerCallContext context)
    {
        // Series that lack the label are welcome (they join every rest): only an empty selection is refused here.
        WindowSketches read = await store.ReadAsync(selector, window, [splitBy], acceptPartial, context.CancellationToken).ConfigureAwait(false);
        SelectionCheck.Require(read, selector, [], "selector");
        var groups = new List<StandoutInput>(read.Groups.Count);
        SeriesSketch? shared = null;
        int sharedSeries = 0;
        foreach (GroupSketch group in read.Groups)
        {
            string value = group.Labels[splitBy];
            if (value.Length == 0)
            {
                (shared, sharedSeries) = (group.Sketch, group.SeriesMerged);
            }
            else
            {
                groups.Add(new StandoutInput(value, group.Sketch, group.SeriesMerged));
            }
        }

        if (groups.Count == 0)
        {
            throw RpcErrors.Invalid("split_by", $"split_by is '{splitBy}', a label none of the {sharedSeries} series matching {selector} carries.");
        }

        return (groups, shared, sharedSeries, read);
    }
}
