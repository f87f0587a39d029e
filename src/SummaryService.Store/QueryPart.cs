using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>
/// One piece of a window answer, taken under the shard lock: a copy of a bucket, a cached block
/// (never mutated, so shared by reference), or a block still to be built from copies of its buckets.
/// </summary>
internal sealed class QueryPart
{
    private QueryPart(SeriesSketch? ready, BlockKey? block, List<SeriesSketch>? buckets)
    {
        Ready = ready;
        Block = block;
        Buckets = buckets;
    }

    /// <summary>The sketch to merge, when no building is needed.</summary>
    public SeriesSketch? Ready { get; private set; }

    /// <summary>The block this part stands for, when it is one.</summary>
    public BlockKey? Block { get; }

    /// <summary>Copies of a missing block's buckets, in time order.</summary>
    public List<SeriesSketch>? Buckets { get; }

    public static QueryPart Bucket(SeriesSketch copy) => new(copy, null, null);

    public static QueryPart Cached(BlockKey block, SeriesSketch sketch) => new(sketch, block, null);

    public static QueryPart ToBuild(BlockKey block, List<SeriesSketch> buckets) => new(null, block, buckets);

    /// <summary>Builds a missing block outside any lock; returns the sketch to merge.</summary>
    public SeriesSketch Resolve(SeriesSketchOptions options, ulong seed)
    {
        if (Ready is not null)
        {
            return Ready;
        }

        var block = new SeriesSketch(options, seed);
        foreach (SeriesSketch bucket in Buckets!)
        {
            block.Merge(bucket);
        }

        Ready = block;
        return block;
    }
}

/// <summary>A block of <c>BlockFactors[Level]</c> consecutive buckets of one tier, starting at <see cref="Start"/>.</summary>
internal readonly record struct BlockKey(int Tier, int Level, long Start);
