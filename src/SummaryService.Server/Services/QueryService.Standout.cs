using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Mapping;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;
using StoreSelector = SummaryService.Store.Selector;
using StoreTimeRange = SummaryService.Store.TimeRange;

namespace SummaryService.Server.Services;

/// <summary>Which group stands out: every value of one label against the merge of all the others.</summary>
public sealed partial class QueryService
{
    // The store's per-group summary is not read here: the leanest one keeps its cost low.
    private static readonly SummaryOptions SketchesOnly = new() { Quantiles = [], MaxModes = 0 };

    /// <summary>
    /// Ranks the values of <c>split_by</c> by how far each group departs from the rest (with
    /// <c>before</c>: by how much each moved against the rest). Series lacking the label join every
    /// rest and no group. Every field is checked before the store is read.
    /// </summary>
    public override Task<StandoutReply> Standout(StandoutRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        long started = time.GetTimestamp();
        long now = NowMs();
        StoreSelector selector = QueryRequests.SelectorOf(request.Selector, "selector");
        CallerAccess.Of(context).Require(Scope.Read, selector.Metric, "selector.metric");
        string splitBy = StandoutRequests.SplitByOf(request.SplitBy);
        StoreTimeRange window = QueryRequests.WindowOf(request.Window, "window", now);
        StoreTimeRange? before = request.Before is null ? null : QueryRequests.WindowOf(request.Before, "before", now);
        StandoutOptions options = StandoutRequests.OptionsOf(request);

        var (groups, shared, sharedSeries, covered) = Split(selector, splitBy, window);
        StandoutBaseline? baseline = null;
        StoreTimeRange coveredBefore = default;
        if (before is { } earlier)
        {
            (var groupsBefore, var sharedBefore, int sharedSeriesBefore, coveredBefore) = Split(selector, splitBy, earlier);
            baseline = new StandoutBaseline(groupsBefore, sharedBefore, sharedSeriesBefore);
        }

        StandoutReply reply = StandoutMapping.ToProto(SplitComparison.Rank(groups, shared, sharedSeries, options, baseline), options);
        reply.Covered = SummaryMapping.ToProto(covered);
        reply.CoveredBefore = before is null ? null : SummaryMapping.ToProto(coveredBefore);
        reply.UnsplitSeries = (uint)sharedSeries;
        metrics.QueryAnswered(nameof(Standout), ServerMetrics.Since(time, started));
        return Task.FromResult(reply);
    }

    // One window's groups by the label's value; series without the label are kept apart.
    private (List<StandoutInput> Groups, SeriesSketch? Shared, int SharedSeries, StoreTimeRange Covered) Split(StoreSelector selector, string splitBy, StoreTimeRange window)
    {
        var answer = host.Store.Summarize(selector, window, [splitBy], SketchesOnly);
        SelectionCheck.Require(answer, selector, [], "selector");
        var groups = new List<StandoutInput>(answer.Groups.Count);
        SeriesSketch? shared = null;
        int sharedSeries = 0;
        foreach (Store.GroupSummary group in answer.Groups)
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

        return (groups, shared, sharedSeries, answer.Covered);
    }
}
