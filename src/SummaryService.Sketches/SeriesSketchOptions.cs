using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches;

/// <summary>Accuracy settings of a <see cref="SeriesSketch"/>; sketches merge only with sketches of the same mode settings.</summary>
public sealed record SeriesSketchOptions
{
    /// <summary>The defaults: k = 200, log buckets at scale 6 spanning at most 2048 indices, modes by exact value, count-min 136 × 5.</summary>
    public static readonly SeriesSketchOptions Default = new();

    /// <summary>KLL top-level capacity.</summary>
    public int K { get; init; } = KllSketch.DefaultK;

    /// <summary>
    /// Starting scale of the log buckets: base 2^(2^−scale), relative bound (base − 1)/(base + 1) —
    /// 0.54% at the default 6. Sketches of different scales merge at the coarser one.
    /// </summary>
    public int LogScale { get; init; } = LogBucketSketch.DefaultScale;

    /// <summary>Bucket indices one sign's log buckets may span before the scale drops by one.</summary>
    public int LogMaxBuckets { get; init; } = LogBucketSketch.DefaultMaxBuckets;

    /// <summary>Bin width for modes; 0 counts exact values.</summary>
    public double ModeResolution { get; init; }

    /// <summary>Distinct keys counted exactly.</summary>
    public int ModeExactLimit { get; init; } = ModeSketch.DefaultExactLimit;

    /// <summary>Count-min width.</summary>
    public int ModeWidth { get; init; } = ModeSketch.DefaultWidth;

    /// <summary>Count-min depth.</summary>
    public int ModeDepth { get; init; } = ModeSketch.DefaultDepth;

    /// <summary>Candidate keys tracked once counting is approximate.</summary>
    public int ModeCandidates { get; init; } = ModeSketch.DefaultCandidateLimit;
}
