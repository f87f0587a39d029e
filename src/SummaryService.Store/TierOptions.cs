namespace SummaryService.Store;

/// <summary>One resolution of a series' timeline: buckets of <see cref="BucketWidth"/>, kept for <see cref="Retention"/>.</summary>
/// <param name="BucketWidth">Width of each bucket; a multiple of the previous tier's width.</param>
/// <param name="Retention">Age up to which buckets stay at this resolution; an older bucket is merged into the next tier (or, in the last tier, dropped). Increases from tier to tier.</param>
public sealed record TierOptions(TimeSpan BucketWidth, TimeSpan Retention)
{
    /// <summary>Bucket width in milliseconds.</summary>
    public long WidthMs => (long)BucketWidth.TotalMilliseconds;

    /// <summary>Retention in milliseconds.</summary>
    public long RetentionMs => (long)Retention.TotalMilliseconds;
}
