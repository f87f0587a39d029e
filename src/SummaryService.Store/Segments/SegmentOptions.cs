using SummaryService.Readable;

namespace SummaryService.Store.Segments;

/// <summary>How the store keeps aged buckets in segment files.</summary>
public sealed record SegmentOptions
{
    /// <summary>
    /// Age past which closed buckets of the first tier leave memory for segment files; coarser tiers
    /// leave as soon as a bucket is closed. An hour by default: the head holds what writes and most
    /// dashboard reads touch (the last hour at full resolution), everything older is read rarely.
    /// </summary>
    public TimeSpan HotSpan { get; init; } = TimeSpan.FromHours(1);

    /// <summary>Buckets leave memory in whole spans of this length, so one rollup pass in this span writes the segments and the others write none. 10 minutes by default.</summary>
    public TimeSpan SegmentSpan { get; init; } = TimeSpan.FromMinutes(10);

    /// <summary>
    /// A coarse tier's span holds this many of its buckets when that is longer than
    /// <see cref="SegmentSpan"/>: 60 by default, as many as 10 minutes of 10-second buckets.
    /// </summary>
    public int BucketsPerSpan { get; init; } = 60;

    public long HotSpanMs => (long)HotSpan.TotalMilliseconds;

    public long SegmentSpanMs => (long)SegmentSpan.TotalMilliseconds;

    /// <summary>The span a tier of buckets <paramref name="widthMs"/> wide leaves memory in.</summary>
    public long SpanMsFor(long widthMs) => Math.Max(SegmentSpanMs, BucketsPerSpan * widthMs);

    /// <summary>Checks the options and names the first bad setting.</summary>
    public void Validate()
    {
        if (HotSpan < TimeSpan.Zero)
        {
            throw new ArgumentOutOfRangeException(nameof(HotSpan), $"HotSpan is {DurationText.Format(HotSpan)}; it must not be negative.");
        }

        if (BucketsPerSpan < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(BucketsPerSpan), $"BucketsPerSpan is {BucketsPerSpan}; it must be at least 1.");
        }

        if (SegmentSpanMs < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(SegmentSpan), $"SegmentSpan is {DurationText.Format(SegmentSpan)}; it must be at least 1ms.");
        }
    }
}
