using SummaryService.Readable;
using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>Shape, limits and accuracy of a series store.</summary>
public sealed record StoreOptions
{
    /// <summary>
    /// 10 s buckets for 6 h, 1 min for 2 days, 10 min for 14 days, 1 h for 90 days: sized by what
    /// dashboards ask (a 6 h window at 1 min steps reads one full form throughout; a day at 1 min, a
    /// week at 10 min and a quarter at 1 h stay near or under 2,000 points) and by what a bucket costs
    /// (a full 10 s bucket up to ~12 KB, a compact aged one ~1–2 KB; docs/performance.md, "Tiers").
    /// </summary>
    public static readonly IReadOnlyList<TierOptions> DefaultTiers =
    [
        new(TimeSpan.FromSeconds(10), TimeSpan.FromHours(6)),
        new(TimeSpan.FromMinutes(1), TimeSpan.FromDays(2)),
        new(TimeSpan.FromMinutes(10), TimeSpan.FromDays(14)),
        new(TimeSpan.FromHours(1), TimeSpan.FromDays(90)),
    ];

    /// <summary>Number of shards, a power of two.</summary>
    public int ShardCount { get; init; } = 16;

    /// <summary>Tiers from finest to coarsest.</summary>
    public IReadOnlyList<TierOptions> Tiers { get; init; } = DefaultTiers;

    /// <summary>Accuracy of every bucket's sketch.</summary>
    public SeriesSketchOptions Sketch { get; init; } = SeriesSketchOptions.Default;

    /// <summary>Most series the store holds.</summary>
    public int MaxSeries { get; init; } = 100_000;

    /// <summary>Most series one tenant holds; see <see cref="TenantPrefixes"/> for what a tenant is.</summary>
    public int MaxSeriesPerTenant { get; init; } = 20_000;

    /// <summary>
    /// Metric-name prefixes that each make a tenant (the server passes its API keys' prefixes): a
    /// metric belongs to the longest one it starts with. A metric under none belongs to the tenant
    /// named by its part before the first '.'.
    /// </summary>
    public IReadOnlyList<string> TenantPrefixes { get; init; } = [];

    /// <summary>Most labels on one series.</summary>
    public int MaxLabels { get; init; } = 16;

    /// <summary>Longest metric name.</summary>
    public int MaxMetricLength { get; init; } = 200;

    /// <summary>Longest label name or value.</summary>
    public int MaxLabelLength { get; init; } = 200;

    /// <summary>Most values in one batch.</summary>
    public int MaxValuesPerBatch { get; init; } = 1_000_000;

    /// <summary>How far ahead of the store's clock a timestamp may lie.</summary>
    public TimeSpan MaxFuture { get; init; } = TimeSpan.FromMinutes(5);

    /// <summary>Approximate bytes all sketches may occupy; new buckets are refused beyond it.</summary>
    public long MemoryBudgetBytes { get; init; } = 2L << 30;

    /// <summary>
    /// How long the store remembers a producer's highest applied sequence after it last heard from
    /// that producer. A producer silent for longer that then resends a batch it had sent before would
    /// see it applied again, so this must exceed the longest a producer keeps retrying; 7 days by default.
    /// </summary>
    public TimeSpan ProducerMarkRetention { get; init; } = TimeSpan.FromDays(7);

    /// <summary>Total retention: the last tier's horizon.</summary>
    public long TotalRetentionMs => Tiers[^1].RetentionMs;

    /// <summary>Checks the options and names the first bad setting.</summary>
    public void Validate()
    {
        if (ShardCount < 1 || (ShardCount & (ShardCount - 1)) != 0)
        {
            throw new ArgumentOutOfRangeException(nameof(ShardCount), ShardCount, "ShardCount must be a power of two.");
        }

        if (Tiers.Count == 0)
        {
            throw new ArgumentException("Tiers must list at least one tier.", nameof(Tiers));
        }

        for (int i = 0; i < Tiers.Count; i++)
        {
            var tier = Tiers[i];
            if (tier.WidthMs < 1 || tier.RetentionMs < tier.WidthMs)
            {
                throw new ArgumentOutOfRangeException(nameof(Tiers), $"Tiers[{i}] ({Describe(tier)}) needs a width of at least 1ms and a retention of at least one bucket.");
            }

            if (i > 0 && tier.RetentionMs <= Tiers[i - 1].RetentionMs)
            {
                throw new ArgumentOutOfRangeException(nameof(Tiers), $"Tiers[{i}].Retention ({DurationText.Format(tier.Retention)}) must exceed Tiers[{i - 1}].Retention ({DurationText.Format(Tiers[i - 1].Retention)}): each tier keeps buckets up to an older age.");
            }

            if (i > 0 && tier.WidthMs % Tiers[i - 1].WidthMs != 0)
            {
                throw new ArgumentOutOfRangeException(nameof(Tiers), $"Tiers[{i}].BucketWidth ({DurationText.Format(tier.BucketWidth)}) must be a multiple of Tiers[{i - 1}].BucketWidth ({DurationText.Format(Tiers[i - 1].BucketWidth)}) so that buckets roll up whole.");
            }
        }

        if (ProducerMarkRetention <= TimeSpan.Zero)
        {
            throw new ArgumentOutOfRangeException(nameof(ProducerMarkRetention), $"ProducerMarkRetention is {DurationText.Format(ProducerMarkRetention)}; it must be positive.");
        }

        foreach (var (name, value) in new[] { (nameof(MaxSeries), MaxSeries), (nameof(MaxSeriesPerTenant), MaxSeriesPerTenant), (nameof(MaxLabels), MaxLabels), (nameof(MaxMetricLength), MaxMetricLength), (nameof(MaxLabelLength), MaxLabelLength), (nameof(MaxValuesPerBatch), MaxValuesPerBatch) })
        {
            if (value < 1)
            {
                throw new ArgumentOutOfRangeException(name, value, $"{name} must be at least 1.");
            }
        }
    }

    private static string Describe(TierOptions tier) => $"buckets of {DurationText.Format(tier.BucketWidth)} kept for {DurationText.Format(tier.Retention)}";
}
