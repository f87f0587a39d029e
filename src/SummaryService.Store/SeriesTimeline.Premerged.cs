using SummaryService.Sketches;
using SummaryService.Store.Segments;

namespace SummaryService.Store;

/// <summary>
/// Pre-merged blocks in segment files: when a whole block of aged buckets leaves memory together,
/// the block's merge is written beside them, built exactly as a query would build it (the buckets in
/// time order into a sketch seeded from the block's identity), so a window over days reads one
/// sketch per block from disk instead of every bucket, and the answer is the same bytes. A block
/// stands only while every one of its buckets is unchanged: any change drops it, like a cached one.
/// </summary>
internal sealed partial class SeriesTimeline
{
    private Dictionary<BlockKey, AgedBucket>? _agedBlocks;

    /// <summary>Pre-merged blocks held in segment files.</summary>
    public IEnumerable<AgedBucket> AgedBlocks() => _agedBlocks?.Values ?? Enumerable.Empty<AgedBucket>();

    public int AgedBlockCount => _agedBlocks?.Count ?? 0;

    /// <summary>
    /// The level whose blocks a tier's segments carry: the largest whose block fits in the tier's
    /// span, so a span's move can complete it; null when even the smallest does not fit.
    /// </summary>
    public static int? PremergedLevel(long widthMs, long spanMs)
    {
        for (int level = BlockFactors.Length - 1; level >= 0; level--)
        {
            if (widthMs * BlockFactors[level] <= spanMs)
            {
                return level;
            }
        }

        return null;
    }

    /// <summary>
    /// Blocks of <paramref name="level"/> that the moved buckets complete: the block ends by the
    /// cutoff (so every in-memory bucket inside it is among the moved ones) and none of its buckets
    /// is already in a segment; with each block's merge.
    /// </summary>
    public List<(long StartMs, SeriesSketch Sketch)> Premerge(int tier, int level, List<(long StartMs, SeriesSketch Sketch)> moved, long cutoffMs)
    {
        long width = options.Tiers[tier].WidthMs;
        IList<long> aged = AgedStarts(tier);
        var blocks = new List<(long, SeriesSketch)>();
        long blockWidth = options.Tiers[tier].WidthMs * BlockFactors[level];
        int at = 0;
        while (at < moved.Count)
        {
            long blockStart = AlignDown(moved[at].StartMs, blockWidth);
            long blockEnd = blockStart + blockWidth;
            int end = at;
            while (end < moved.Count && moved[end].StartMs < blockEnd)
            {
                end++;
            }

            int agedAt = FirstEndingAfter(aged, blockStart, width);
            bool whole = blockEnd <= cutoffMs && (agedAt == aged.Count || aged[agedAt] >= blockEnd);
            if (whole && !(_agedBlocks?.ContainsKey(new BlockKey(tier, level, blockStart)) ?? false))
            {
                var block = new SeriesSketch(options.Sketch, SeedFor(new BlockKey(tier, level, blockStart)));
                for (int i = at; i < end; i++)
                {
                    block.Merge(moved[i].Sketch);
                }

                blocks.Add((blockStart, block));
            }

            at = end;
        }

        return blocks;
    }

    /// <summary>
    /// Points the written blocks at their segment copies, each only if all its buckets did leave
    /// memory unchanged (none of the tier's buckets inside it is still in memory).
    /// </summary>
    public void ToAgedBlocks(int tier, int level, IReadOnlyList<(long StartMs, SeriesSketch Sketch)> blocks, SegmentHandle segment, IReadOnlyList<BucketLocation> locations)
    {
        long blockWidth = options.Tiers[tier].WidthMs * BlockFactors[level];
        for (int i = 0; i < blocks.Count; i++)
        {
            long start = blocks[i].StartMs;
            int first = FirstEndingAfter(_tiers[tier].Keys, start, options.Tiers[tier].WidthMs);
            if (first < _tiers[tier].Count && _tiers[tier].Keys[first] < start + blockWidth)
            {
                continue;
            }

            AddAgedBlock(new BlockKey(tier, level, start), new AgedBucket(segment, locations[i]));
        }
    }

    /// <summary>Puts back a block a snapshot's manifest lists, when it fits the current tier layout.</summary>
    public void AddAgedBlock(int tier, int level, AgedBucket aged)
    {
        long start = aged.Location.StartMs;
        if (tier < _tiers.Length && level < BlockFactors.Length && aged.Segment.Reader.Info.WidthMs == options.Tiers[tier].WidthMs * BlockFactors[level]
            && AlignDown(start, aged.Segment.Reader.Info.WidthMs) == start)
        {
            AddAgedBlock(new BlockKey(tier, level, start), aged);
        }
    }

    // The block read from its segment (and kept in the block cache) when there is one; a damaged
    // one is dropped, and the block is then built from its buckets as if it had never been written.
    private bool TryLoadAgedBlock(BlockKey key, out SeriesSketch block)
    {
        block = null!;
        if (_agedBlocks is null || !_agedBlocks.TryGetValue(key, out AgedBucket aged))
        {
            return false;
        }

        try
        {
            block = aged.Load();
            _blocks[key] = block;
            return true;
        }
        catch (SegmentDamagedException ex)
        {
            aged.Segment.ReportDamage(ex);
            _agedBlocks.Remove(key);
            aged.Segment.Release();
            return false;
        }
    }

    private void AddAgedBlock(BlockKey key, AgedBucket aged)
    {
        _agedBlocks ??= [];
        if (_agedBlocks.TryAdd(key, aged))
        {
            aged.Segment.AddReference();
        }
    }

    // A bucket changes: a pre-merged block holding it no longer stands.
    private void DropAgedBlocks(int tier, long bucketStart)
    {
        if (_agedBlocks is null || _agedBlocks.Count == 0)
        {
            return;
        }

        long width = options.Tiers[tier].WidthMs;
        for (int level = 0; level < BlockFactors.Length; level++)
        {
            var key = new BlockKey(tier, level, AlignDown(bucketStart, width * BlockFactors[level]));
            if (_agedBlocks.Remove(key, out AgedBucket aged))
            {
                aged.Segment.Release();
            }
        }
    }

    private void ReleaseAgedBlocks()
    {
        foreach (AgedBucket aged in AgedBlocks())
        {
            aged.Segment.Release();
        }

        _agedBlocks?.Clear();
    }
}
