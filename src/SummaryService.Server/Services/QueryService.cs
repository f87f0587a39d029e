using Grpc.Core;
using Microsoft.Extensions.Options;
using SummaryService.Readable;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Configuration;
using SummaryService.Server.Hosting;
using SummaryService.Server.Mapping;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Sketches.Summaries;
using StoreSelector = SummaryService.Store.Selector;
using StoreTimeRange = SummaryService.Store.TimeRange;

namespace SummaryService.Server.Services;

/// <summary>Query RPCs: every request is validated field by field before the store is read; reads never change stored data.</summary>
[BindServiceMethod(typeof(DecodeCheckedBinding<Query.QueryBase>), nameof(DecodeCheckedBinding<Query.QueryBase>.BindService))]
public sealed partial class QueryService(StoreHost host, ServerMetrics metrics, TimeProvider time, IOptions<ServerSettings> settings, IHostApplicationLifetime lifetime) : Query.QueryBase
{
    private static readonly double[] DefaultCompareQuantiles = [0.5, 0.9, 0.99];

    /// <inheritdoc/>
    public override Task<SummarizeReply> Summarize(SummarizeRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        long started = time.GetTimestamp();
        var (selector, groupBy, options) = Prepare(request, context);
        StoreTimeRange window = QueryRequests.WindowOf(request.Window, "window", NowMs());
        var answer = host.Store.Summarize(selector, window, groupBy, options);
        SelectionCheck.Require(answer, selector, groupBy, "selector");
        SummarizeReply reply = SummaryMapping.ToProto(answer);
        metrics.QueryAnswered(nameof(Summarize), ServerMetrics.Since(time, started));
        return Task.FromResult(reply);
    }

    /// <summary>
    /// One summary per step, oldest first. Each step is widened to whole buckets like any window, so
    /// steps narrower than the bucket width report a covered span wider than the step.
    /// </summary>
    public override Task<TimelineReply> Timeline(TimelineRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        long started = time.GetTimestamp();
        StoreSelector selector = QueryRequests.SelectorOf(request.Selector, "selector");
        CallerAccess.Of(context).Require(Scope.Read, selector.Metric, "selector.metric");
        StoreTimeRange window = QueryRequests.WindowOf(request.Window, "window", NowMs());
        if (request.Step is null)
        {
            throw RpcErrors.Invalid("step", "step is missing; give the width of each step.");
        }

        long step = (long)QueryRequests.DurationOf(request.Step, "step").TotalMilliseconds;
        if (step < 1)
        {
            throw RpcErrors.Invalid("step", $"step is {DurationText.Format(request.Step.ToTimeSpan())}; it must be at least 1ms.");
        }

        // In 128 bits: a window from near the start of 64-bit time to now is longer than a long holds.
        Int128 length = (Int128)window.ToUnixMs - window.FromUnixMs;
        Int128 steps = (length + step - 1) / step;
        if (steps > settings.Value.MaxTimelineSteps)
        {
            throw RpcErrors.Invalid("step", $"step {DurationText.Format(request.Step.ToTimeSpan())} cuts the window of {QueryRequests.LengthText(length)} into {steps} steps; at most {settings.Value.MaxTimelineSteps} are allowed.");
        }

        var groupBy = GroupByOf(request.GroupBy);
        SummaryOptions options = QueryRequests.OptionsOf(request.Quantiles, request.Confidence, [], 0, null);
        var answers = host.Store.SummarizeSteps(selector, window, step, groupBy, options);
        SelectionCheck.Require(answers[0], selector, groupBy, "selector");
        var reply = new TimelineReply();
        for (int i = 0; i < answers.Count; i++)
        {
            long from = window.FromUnixMs + (i * step);
            var range = new StoreTimeRange(from, Math.Min(from + step, window.ToUnixMs));
            var entry = new TimelineStep { Step = SummaryMapping.ToProto(range), Covered = SummaryMapping.ToProto(answers[i].Covered) };
            foreach (Store.GroupSummary group in answers[i].Groups)
            {
                if (group.Summary.Count > 0)
                {
                    entry.Groups.Add(SummaryMapping.ToProto(group));
                }
            }

            reply.Steps.Add(entry);
        }

        metrics.QueryAnswered(nameof(Timeline), ServerMetrics.Since(time, started));
        return Task.FromResult(reply);
    }

    /// <summary>
    /// Pushes the trailing-window summary at once and then every interval, until the caller cancels,
    /// <c>max_updates</c> is reached, or the host stops (the stream then ends cleanly). A caller that
    /// takes no update for <c>Server:WatchMaxLag</c> is cut off with ResourceExhausted.
    /// </summary>
    public override async Task Watch(WatchRequest request, IServerStreamWriter<SummarizeReply> responseStream, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(responseStream);
        ArgumentNullException.ThrowIfNull(context);
        SummarizeRequest query = request.Query ?? throw RpcErrors.Invalid("query", "query is missing; give the summary to repeat.");
        var (selector, groupBy, options) = Prepare(query, context, "query.");
        if (query.Window?.SpanCase != Window.SpanOneofCase.Last)
        {
            throw RpcErrors.Invalid("query.window", "query.window must be a trailing duration (last): a watch measures it back from each push.");
        }

        _ = QueryRequests.WindowOf(query.Window, "query.window", NowMs());
        TimeSpan interval = request.Interval is null ? TimeSpan.FromSeconds(5) : QueryRequests.DurationOf(request.Interval, "interval");
        if (interval == TimeSpan.Zero)
        {
            interval = TimeSpan.FromSeconds(5);
        }

        if (interval < TimeSpan.FromMilliseconds(100))
        {
            throw RpcErrors.Invalid("interval", $"interval is {DurationText.Format(interval)}; it must be at least 100ms.");
        }

        using var stop = CancellationTokenSource.CreateLinkedTokenSource(context.CancellationToken, lifetime.ApplicationStopping);
        using var timer = new PeriodicTimer(interval, time);
        uint sent = 0;
        try
        {
            do
            {
                long started = time.GetTimestamp();
                StoreTimeRange window = QueryRequests.WindowOf(query.Window, "query.window", NowMs());
                SummarizeReply reply = SummaryMapping.ToProto(host.Store.Summarize(selector, window, groupBy, options));
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
    public override Task<CompareReply> Compare(CompareRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(context);
        long started = time.GetTimestamp();
        long now = NowMs();
        SummaryOptions options = QueryRequests.OptionsOf(request.Quantiles, request.Confidence, [], 0, null, DefaultCompareQuantiles);
        var a = Side(request.A, "a", now, options, context);
        var b = Side(request.B, "b", now, options, context);
        var reply = new CompareReply
        {
            A = SummaryMapping.ToProto(a.Group.Summary),
            B = SummaryMapping.ToProto(b.Group.Summary),
            CoveredA = SummaryMapping.ToProto(a.Covered),
            CoveredB = SummaryMapping.ToProto(b.Covered),
        };
        if (a.Group.Summary.Count > 0 && b.Group.Summary.Count > 0)
        {
            foreach (double q in options.Quantiles)
            {
                reply.Shifts.Add(SummaryMapping.ToProto(SketchComparison.Shift(a.Group.Sketch, b.Group.Sketch, q, options.Confidence)));
            }
        }

        var (distance, low, high) = SketchComparison.KolmogorovSmirnov(a.Group.Sketch, b.Group.Sketch, options.Confidence);
        reply.KsDistance = distance;
        reply.KsLow = low;
        reply.KsHigh = high;
        metrics.QueryAnswered(nameof(Compare), ServerMetrics.Since(time, started));
        return Task.FromResult(reply);
    }

    private (Store.GroupSummary Group, StoreTimeRange Covered) Side(Contract.V1.Side? side, string name, long now, SummaryOptions options, ServerCallContext context)
    {
        if (side is null)
        {
            throw RpcErrors.Invalid(name, $"{name} is missing; give a selector and a window for each side.");
        }

        StoreSelector selector = QueryRequests.SelectorOf(side.Selector, $"{name}.selector");
        CallerAccess.Of(context).Require(Scope.Read, selector.Metric, $"{name}.selector.metric");
        StoreTimeRange window = QueryRequests.WindowOf(side.Window, $"{name}.window", now);
        var answer = host.Store.Summarize(selector, window, [], options);
        SelectionCheck.Require(answer, selector, [], $"{name}.selector");
        return (answer.Groups[0], answer.Covered);
    }

    private (StoreSelector Selector, IReadOnlyList<string> GroupBy, SummaryOptions Options) Prepare(SummarizeRequest request, ServerCallContext context, string prefix = "")
    {
        StoreSelector selector = QueryRequests.SelectorOf(request.Selector, $"{prefix}selector");
        CallerAccess.Of(context).Require(Scope.Read, selector.Metric, $"{prefix}selector.metric");
        var groupBy = GroupByOf(request.GroupBy);
        SummaryOptions options = QueryRequests.OptionsOf(request.Quantiles, request.Confidence, request.RankOf, request.MaxModes, request.Histogram);
        return (selector, groupBy, options);
    }

    private static string[] GroupByOf(IReadOnlyList<string> groupBy)
    {
        for (int i = 0; i < groupBy.Count; i++)
        {
            if (string.IsNullOrEmpty(groupBy[i]))
            {
                throw RpcErrors.Invalid($"group_by[{i}]", $"group_by[{i}] is empty; name a label.");
            }

            for (int j = 0; j < i; j++)
            {
                if (string.Equals(groupBy[i], groupBy[j], StringComparison.Ordinal))
                {
                    throw RpcErrors.Invalid($"group_by[{i}]", $"group_by[{i}] '{groupBy[i]}' repeats group_by[{j}].");
                }
            }
        }

        return groupBy.ToArray();
    }

    private long NowMs() => time.GetUtcNow().ToUnixTimeMilliseconds();
}
