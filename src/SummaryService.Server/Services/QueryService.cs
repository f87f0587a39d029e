using Grpc.Core;
using Microsoft.Extensions.Options;
using SummaryService.Readable;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Configuration;
using SummaryService.Server.Mapping;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// Query RPCs: each request is checked (<see cref="QueryRequests"/>, <see cref="QueryShapes"/>) and
/// its access verified before the store is read; the store returns merged sketches, which are
/// summarized here and mapped to the wire. Reads never change stored data. Unary calls are timed
/// by <see cref="QueryTimingInterceptor"/>.
/// </summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<Query.QueryBase>), nameof(DecodeCheckedBinding<Query.QueryBase>.BindService))]
public sealed partial class QueryService(ISeriesStore store, ServerMetrics metrics, TimeProvider time, IOptions<ServerSettings> settings, IHostApplicationLifetime lifetime) : Query.QueryBase
{
    /// <inheritdoc/>
    public override async Task<SummarizeReply> Summarize(SummarizeRequest request, ServerCallContext context)
    {
        var (selector, groupBy, options) = Prepare(request, context);
        TimeWindow window = QueryRequests.WindowOf(request.Window, "window", NowMs());
        WindowSketches read = await ReadSelectedAsync(selector, window, groupBy, request.AcceptPartial, "selector", context).ConfigureAwait(false);
        SummarizeReply reply = SummaryMapping.ToProto(StoreSummaries.Summarize(read, options));
        reply.Coverage = CoverageMapping.ToProto([read]);
        return reply;
    }

    /// <summary>
    /// One summary per step, oldest first. Each step is widened to whole buckets like any window, so
    /// steps narrower than the bucket width report a covered span wider than the step.
    /// </summary>
    public override async Task<TimelineReply> Timeline(TimelineRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        SeriesSelector selector = Readable(request.Selector, "selector", context);
        TimeWindow window = QueryRequests.WindowOf(request.Window, "window", NowMs());
        long step = QueryShapes.StepOf(request.Step, window, settings.Value.MaxTimelineSteps);
        string[] groupBy = QueryShapes.GroupByOf(request.GroupBy);
        SummaryOptions options = QueryRequests.OptionsOf(request.Quantiles, request.Confidence, [], 0, null);
        var reads = await store.ReadStepsAsync(selector, window, step, groupBy, request.AcceptPartial, context.CancellationToken).ConfigureAwait(false);
        SelectionCheck.Require(reads[0], selector, groupBy, "selector");
        TimelineReply reply = ComparisonMapping.ToTimeline(window, step, reads.Select(r => StoreSummaries.Summarize(r, options)).ToArray());
        reply.Coverage = CoverageMapping.ToProto(reads);
        return reply;
    }

    /// <summary>
    /// Pushes the trailing-window summary at once and then every interval, until the caller cancels,
    /// <c>max_updates</c> is reached, or the host stops (the stream then ends cleanly). A caller that
    /// takes no update for <c>Server:WatchMaxLag</c> is cut off with ResourceExhausted.
    /// </summary>
    public override async Task Watch(WatchRequest request, IServerStreamWriter<SummarizeReply> responseStream, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        SummarizeRequest query = request.Query ?? throw RpcErrors.Invalid("query", "query is missing; give the summary to repeat.");
        var (selector, groupBy, options) = Prepare(query, context, "query.");
        if (query.Window?.SpanCase != Window.SpanOneofCase.Last)
        {
            throw RpcErrors.Invalid("query.window", "query.window must be a trailing duration (last): a watch measures it back from each push.");
        }

        _ = QueryRequests.WindowOf(query.Window, "query.window", NowMs());
        TimeSpan interval = QueryShapes.WatchIntervalOf(request.Interval, settings.Value);
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(context.CancellationToken, lifetime.ApplicationStopping);
        using var timer = new PeriodicTimer(interval, time);
        uint sent = 0;
        try
        {
            do
            {
                // Each update is one answered query, timed as such (the call itself is a stream).
                long started = time.GetTimestamp();
                TimeWindow window = QueryRequests.WindowOf(query.Window, "query.window", NowMs());
                WindowSketches read = await store.ReadAsync(selector, window, groupBy, query.AcceptPartial, stop.Token).ConfigureAwait(false);
                SummarizeReply reply = SummaryMapping.ToProto(StoreSummaries.Summarize(read, options));
                reply.Coverage = CoverageMapping.ToProto([read]);
                metrics.QueryAnswered(nameof(Watch), ServerMetrics.Since(time, started));
                await SlowReaders.WriteOrCutOffAsync(responseStream, reply, settings.Value.WatchMaxLag, time, stop.Token).ConfigureAwait(false);
                sent++;
            }
            while ((request.MaxUpdates == 0 || sent < request.MaxUpdates) && await timer.WaitForNextTickAsync(stop.Token).ConfigureAwait(false));
        }
        catch (OperationCanceledException) when (stop.IsCancellationRequested)
        {
            // Cancelled by the caller or ended by shutdown.
        }
    }

    /// <inheritdoc/>
    public override async Task<CompareReply> Compare(CompareRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        long now = NowMs();
        SummaryOptions options = QueryRequests.OptionsOf(request.Quantiles, request.Confidence, [], 0, null, QueryDefaults.CompareQuantiles);
        WindowSketches a = await SideAsync(request.A, "a", now, request.AcceptPartial, context).ConfigureAwait(false);
        WindowSketches b = await SideAsync(request.B, "b", now, request.AcceptPartial, context).ConfigureAwait(false);
        CompareReply reply = ComparisonMapping.ToComparison(StoreSummaries.Summarize(a, options), StoreSummaries.Summarize(b, options), options);
        reply.Coverage = CoverageMapping.ToProto([a, b]);
        return reply;
    }

    private async Task<WindowSketches> SideAsync(Side? side, string name, long now, bool acceptPartial, ServerCallContext context)
    {
        if (side is null)
        {
            throw RpcErrors.Invalid(name, $"{name} is missing; give a selector and a window for each side.");
        }

        SeriesSelector selector = Readable(side.Selector, $"{name}.selector", context);
        TimeWindow window = QueryRequests.WindowOf(side.Window, $"{name}.window", now);
        return await ReadSelectedAsync(selector, window, [], acceptPartial, $"{name}.selector", context).ConfigureAwait(false);
    }

    // A selection that matched nothing, or a group-by label none of its series carries, is refused by name.
    private async Task<WindowSketches> ReadSelectedAsync(SeriesSelector selector, TimeWindow window, string[] groupBy, bool acceptPartial, string field, ServerCallContext context)
    {
        WindowSketches read = await store.ReadAsync(selector, window, groupBy, acceptPartial, context.CancellationToken).ConfigureAwait(false);
        SelectionCheck.Require(read, selector, groupBy, field);
        return read;
    }

    private static (SeriesSelector Selector, string[] GroupBy, SummaryOptions Options) Prepare(SummarizeRequest request, ServerCallContext context, string prefix = "")
    {
        ArgumentNullException.ThrowIfNull(request);
        SeriesSelector selector = Readable(request.Selector, $"{prefix}selector", context);
        var (groupBy, options) = QueryShapes.Of(request);
        return (selector, groupBy, options);
    }

    // The selector, checked, and the caller's read access to its metric (in that order, as every query does).
    private static SeriesSelector Readable(Selector? selector, string field, ServerCallContext context)
    {
        SeriesSelector checkedSelector = QueryRequests.SelectorOf(selector, field);
        CallerAccess.Of(context).Require(Scope.Read, checkedSelector.Metric, $"{field}.metric");
        return checkedSelector;
    }

    private long NowMs() => time.GetUtcNow().ToUnixTimeMilliseconds();
}
