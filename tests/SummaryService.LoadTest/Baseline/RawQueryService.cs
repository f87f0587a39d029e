using Grpc.Core;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.LoadTest.Baseline;

/// <summary>The baseline's <c>Query.Summarize</c> and <c>Query.Timeline</c>: exact answers by sorting at query time.</summary>
public sealed class RawQueryService(RawValueStore store) : Query.QueryBase
{
    /// <inheritdoc/>
    public override Task<SummarizeReply> Summarize(SummarizeRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        var (from, to) = RangeOf(request.Window);
        List<RawSeries> selected = Select(request.Selector);
        var reply = new SummarizeReply { Covered = new TimeRange { FromUnixMs = from, ToUnixMs = to } };
        if (selected.Count > 0)
        {
            reply.Groups.Add(new GroupSummary { Summary = ExactSummary.Of(selected, from, to, request.Quantiles), SeriesMerged = (uint)selected.Count });
        }

        return Task.FromResult(reply);
    }

    /// <inheritdoc/>
    public override Task<TimelineReply> Timeline(TimelineRequest request, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(request);
        var (from, to) = RangeOf(request.Window);
        long step = (long)(request.Step ?? throw Invalid("step is missing.")).ToTimeSpan().TotalMilliseconds;
        if (step < 1 || (to - from) / step > 10_000)
        {
            throw Invalid($"step {DurationText.Format(TimeSpan.FromMilliseconds(step))} is out of range.");
        }

        List<RawSeries> selected = Select(request.Selector);
        var reply = new TimelineReply();
        for (long start = from; start < to; start += step)
        {
            long end = Math.Min(start + step, to);
            var range = new TimeRange { FromUnixMs = start, ToUnixMs = end };
            var entry = new TimelineStep { Step = range, Covered = range };
            Summary summary = ExactSummary.Of(selected, start, end, request.Quantiles);
            if (summary.Count > 0)
            {
                entry.Groups.Add(new GroupSummary { Summary = summary, SeriesMerged = (uint)selected.Count });
            }

            reply.Steps.Add(entry);
        }

        return Task.FromResult(reply);
    }

    private List<RawSeries> Select(Selector? selector)
    {
        if (selector is null || selector.Metric.Length == 0)
        {
            throw Invalid("selector.metric is missing.");
        }

        return store.Select(selector.Metric, selector.LabelEquals);
    }

    private static (long From, long To) RangeOf(Window? window)
    {
        if (window?.Range is not { } range || range.FromUnixMs >= range.ToUnixMs)
        {
            throw Invalid("window must be a range with from_unix_ms before to_unix_ms.");
        }

        return (range.FromUnixMs, range.ToUnixMs);
    }

    private static RpcException Invalid(string message) => new(new Status(StatusCode.InvalidArgument, message));
}
