using SummaryService.Store.Segments;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// How much time one segment covers: at least the configured span, and for coarse tiers as many of
/// their own buckets as the finest tier puts in one, so long retention makes few files.
/// </summary>
public sealed class SegmentSpanTests
{
    private static readonly long Minute = (long)TimeSpan.FromMinutes(1).TotalMilliseconds;

    [Fact]
    public void The_default_tiers_leave_memory_in_spans_of_sixty_of_their_buckets()
    {
        var options = new SegmentOptions();
        Assert.Equal(10 * Minute, options.SpanMsFor(10_000)); // 10 s buckets: the configured 10 minutes
        Assert.Equal(60 * Minute, options.SpanMsFor(Minute)); // 1 min buckets: an hour
        Assert.Equal(600 * Minute, options.SpanMsFor(10 * Minute)); // 10 min buckets: 10 hours
        Assert.Equal(3600 * Minute, options.SpanMsFor(60 * Minute)); // hourly buckets: 60 hours
    }

    [Fact]
    public void Ninety_days_of_hourly_buckets_fill_a_few_dozen_spans_per_shard()
    {
        var options = new SegmentOptions();
        long ninetyDays = (long)TimeSpan.FromDays(90).TotalMilliseconds;
        Assert.Equal(36, ninetyDays / options.SpanMsFor(60 * Minute));
    }

    [Fact]
    public void A_span_needs_at_least_one_bucket()
    {
        var error = Assert.Throws<ArgumentOutOfRangeException>(() => new SegmentOptions { BucketsPerSpan = 0 }.Validate());
        Assert.Contains("BucketsPerSpan is 0", error.Message, StringComparison.Ordinal);
    }
}
