namespace SummaryService.Sketches.Buckets;

/// <summary>
/// A log-bucket sketch's occupied buckets read out once as arrays (ascending index on each side),
/// for the readers of one summary — the value-ordered view and the density peaks — to share.
/// </summary>
internal sealed record OccupiedLogBuckets(
    (int[] Indices, long[] Counts) Positive,
    (int[] Indices, long[] Counts) Negative,
    long ZeroCount,
    ExponentialMapping Mapping)
{
    /// <summary>Reads <paramref name="sketch"/>'s buckets.</summary>
    public static OccupiedLogBuckets Of(LogBucketSketch sketch) =>
        new(sketch.PositiveArrays(), sketch.NegativeArrays(), sketch.ZeroCount, sketch.Mapping);

    /// <summary>True when every occupied bucket holds fewer values than <paramref name="count"/>.</summary>
    public bool EveryBucketBelow(long count) =>
        Array.TrueForAll(Positive.Counts, c => c < count) && Array.TrueForAll(Negative.Counts, c => c < count);
}
