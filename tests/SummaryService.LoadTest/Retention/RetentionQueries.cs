using System.Diagnostics;
using SummaryService.Contract.V1;

namespace SummaryService.LoadTest.Retention;

/// <summary>
/// Window queries right after a restart, timed at the client over loopback: the whole span of one
/// series (first, then the median of 20 repeats) and the last hour of every series (the same).
/// The channel is opened by a holdings call first, so connecting is not in the first figure.
/// </summary>
internal sealed record RetentionQueries(double OneSeriesSpanFirstMs, double OneSeriesSpanRepeatedMedianMs, ulong OneSeriesSpanCount, double AllSeriesHourFirstMs, double AllSeriesHourRepeatedMedianMs)
{
    private const int Repeats = 20;

    public static async Task<RetentionQueries> MeasureAsync(Query.QueryClient query, Admin.AdminClient admin, RetentionFill fill, CancellationToken cancellationToken)
    {
        await admin.HoldingsAsync(new HoldingsRequest(), cancellationToken: cancellationToken);
        var span = new SummarizeRequest { Selector = new Selector { Metric = RetentionFill.Metric }, Window = new Window { Range = new TimeRange { FromUnixMs = fill.StartMs, ToUnixMs = fill.EndMs } } };
        span.Selector.LabelEquals.Add(RetentionFill.SeriesLabel, "0");
        var hour = new SummarizeRequest { Selector = new Selector { Metric = RetentionFill.Metric }, Window = new Window { Range = new TimeRange { FromUnixMs = fill.EndMs - 3_600_000, ToUnixMs = fill.EndMs } } };

        var (spanFirst, spanReply) = await TimeAsync(query, span, cancellationToken);
        double spanRepeated = await MedianAsync(query, span, cancellationToken);
        var (hourFirst, _) = await TimeAsync(query, hour, cancellationToken);
        double hourRepeated = await MedianAsync(query, hour, cancellationToken);
        return new RetentionQueries(spanFirst, spanRepeated, spanReply.Groups[0].Summary.Count, hourFirst, hourRepeated);
    }

    private static async Task<(double Ms, SummarizeReply Reply)> TimeAsync(Query.QueryClient query, SummarizeRequest request, CancellationToken cancellationToken)
    {
        long started = Stopwatch.GetTimestamp();
        SummarizeReply reply = await query.SummarizeAsync(request, cancellationToken: cancellationToken);
        return (Stopwatch.GetElapsedTime(started).TotalMilliseconds, reply);
    }

    private static async Task<double> MedianAsync(Query.QueryClient query, SummarizeRequest request, CancellationToken cancellationToken)
    {
        var times = new double[Repeats];
        for (int i = 0; i < Repeats; i++)
        {
            times[i] = (await TimeAsync(query, request, cancellationToken)).Ms;
        }

        Array.Sort(times);
        return times[Repeats / 2];
    }
}
