using SummaryService.Sketches;
using SummaryService.Store;

namespace SummaryService.Server.Configuration;

/// <summary>The <c>Store</c> section: shape, limits and accuracy of the series store.</summary>
public sealed class StoreSettings
{
    /// <summary>Configuration section name.</summary>
    public const string SectionName = "Store";

    /// <summary>Number of shards, a power of two.</summary>
    public int ShardCount { get; set; } = 16;

    /// <summary>Tiers from finest to coarsest; empty means the store's defaults (10 s for 6 h, 1 min for 2 d, 10 min for 14 d, 1 h for 90 d).</summary>
    public List<TierSettings> Tiers { get; set; } = [];

    /// <summary>Most series the store holds.</summary>
    public int MaxSeries { get; set; } = 100_000;

    /// <summary>Most series one tenant holds: with API keys, each key's metric prefix is a tenant; otherwise (and for metrics under no prefix) the metric name up to its first '.'.</summary>
    public int MaxSeriesPerTenant { get; set; } = 20_000;

    /// <summary>Most labels on one series.</summary>
    public int MaxLabels { get; set; } = 16;

    /// <summary>Longest metric name.</summary>
    public int MaxMetricLength { get; set; } = 200;

    /// <summary>Longest label name or value.</summary>
    public int MaxLabelLength { get; set; } = 200;

    /// <summary>Most values in one batch.</summary>
    public int MaxValuesPerBatch { get; set; } = 1_000_000;

    /// <summary>How far ahead of the server's clock a timestamp may lie.</summary>
    public DurationSetting MaxFuture { get; set; } = TimeSpan.FromMinutes(5);

    /// <summary>Approximate bytes all sketches may occupy.</summary>
    public long MemoryBudgetBytes { get; set; } = 2L << 30;

    /// <summary>How long a producer's highest applied sequence is remembered after its last batch.</summary>
    public DurationSetting ProducerMarkRetention { get; set; } = TimeSpan.FromDays(7);

    /// <summary>KLL top-level capacity of every bucket's sketch.</summary>
    public int SketchK { get; set; } = 200;

    /// <summary>Bin width for modes; 0 counts exact values. Uploaded sketches must use the same.</summary>
    public double ModeResolution { get; set; }

    /// <summary>
    /// Starting scale of every bucket's log buckets (base 2^(2^−scale)): 6 gives a relative bound of
    /// 0.54%, 5 of 1.08%, 7 of 0.27%; between 0 and 8.
    /// </summary>
    public int LogScale { get; set; } = Sketches.Buckets.LogBucketSketch.DefaultScale;

    /// <summary>Bucket indices one sign's log buckets may span before the scale drops (2048: 9.6 decades at scale 6).</summary>
    public int LogMaxBuckets { get; set; } = Sketches.Buckets.LogBucketSketch.DefaultMaxBuckets;

    /// <summary>The store options these settings describe.</summary>
    public StoreOptions ToStoreOptions() => new()
    {
        ShardCount = ShardCount,
        Tiers = Tiers.Count == 0 ? StoreOptions.DefaultTiers : Tiers.Select(t => new TierOptions(t.BucketWidth, t.Retention)).ToArray(),
        MaxSeries = MaxSeries,
        MaxSeriesPerTenant = MaxSeriesPerTenant,
        MaxLabels = MaxLabels,
        MaxMetricLength = MaxMetricLength,
        MaxLabelLength = MaxLabelLength,
        MaxValuesPerBatch = MaxValuesPerBatch,
        MaxFuture = MaxFuture,
        MemoryBudgetBytes = MemoryBudgetBytes,
        ProducerMarkRetention = ProducerMarkRetention,
        Sketch = SeriesSketchOptions.Default with { K = SketchK, ModeResolution = ModeResolution, LogScale = LogScale, LogMaxBuckets = LogMaxBuckets },
    };
}

/// <summary>One tier of the <c>Store:Tiers</c> list.</summary>
public sealed class TierSettings
{
    /// <summary>Width of each bucket.</summary>
    public DurationSetting BucketWidth { get; set; }

    /// <summary>Age up to which buckets stay in this tier.</summary>
    public DurationSetting Retention { get; set; }
}
