using SummaryService.Sketches;
using SummaryService.Store.Segments;

namespace SummaryService.Store;

/// <summary>
/// Aged buckets leave memory for segment files: per shard and tier, the due buckets of every series
/// are encoded under the shard lock, written to one segment off it, and then swapped for references
/// into the file — each only if it did not change meanwhile.
/// </summary>
public sealed partial class ShardedSeriesStore
{
    /// <summary>Where aged buckets go; null keeps every bucket in memory.</summary>
    internal SegmentShelf? Segments { get; set; }

    /// <summary>
    /// Moves the buckets due to leave memory (see <see cref="SegmentShelf.CutoffFor"/>) into new
    /// segments, one per shard and tier that has any. Returns the segments written. A segment that
    /// cannot be written leaves its buckets in memory and is retried at the next pass.
    /// </summary>
    internal int MoveAgedBuckets()
    {
        if (Segments is not { } shelf)
        {
            return 0;
        }

        long now = NowMs();
        int written = 0;
        for (int s = 0; s < _shards.Length; s++)
        {
            for (int tier = 0; tier < _options.Tiers.Count; tier++)
            {
                written += MoveTier(shelf, s, tier, shelf.CutoffFor(tier, _options.Tiers[tier].WidthMs, now)) ? 1 : 0;
            }
        }

        return written;
    }

    private bool MoveTier(SegmentShelf shelf, int shardIndex, int tier, long cutoff)
    {
        SeriesShard shard = _shards[shardIndex];
        long width = _options.Tiers[tier].WidthMs;
        var writer = new SegmentWriter(shardIndex, tier, width);
        int? level = SeriesTimeline.PremergedLevel(width, shelf.Options.SpanMsFor(width));
        var blockWriter = level is { } l ? new SegmentWriter(shardIndex, SegmentLayout.BlockTier(tier, l), width * SeriesTimeline.BlockFactors[l]) : null;
        var taken = new List<(SeriesTimeline Timeline, List<(long StartMs, SeriesSketch Sketch)> Buckets, long[] Counts, IReadOnlyList<BucketLocation> Locations)>();
        var premerged = new List<(SeriesTimeline Timeline, List<(long StartMs, SeriesSketch Sketch)> Blocks, IReadOnlyList<BucketLocation> Locations)>();
        lock (shard.Gate)
        {
            foreach (SeriesTimeline timeline in shard.Series.Values.OrderBy(t => t.Key.Canonical, StringComparer.Ordinal))
            {
                lock (timeline)
                {
                    var movable = timeline.Movable(tier, cutoff);
                    if (movable.Count > 0)
                    {
                        long[] counts = [.. movable.Select(b => b.Sketch.Count)];
                        taken.Add((timeline, movable, counts, writer.Add(timeline.Key, movable)));
                        if (blockWriter is not null && timeline.Premerge(tier, level!.Value, movable, cutoff) is { Count: > 0 } blocks)
                        {
                            premerged.Add((timeline, blocks, blockWriter.Add(timeline.Key, blocks)));
                        }
                    }
                }
            }
        }

        if (taken.Count == 0)
        {
            return false;
        }

        SegmentHandle segment = shelf.Write(writer);
        SegmentHandle? blockSegment = premerged.Count > 0 ? shelf.Write(blockWriter!) : null;
        lock (shard.Gate)
        {
            foreach (var (timeline, buckets, counts, locations) in taken)
            {
                if (!shard.Series.TryGetValue(timeline.Key, out var current) || !ReferenceEquals(current, timeline))
                {
                    continue;
                }

                lock (timeline)
                {
                    shard.EstimatedBytes += timeline.ToAged(tier, buckets, counts, segment, locations);
                }
            }

            foreach (var (timeline, blocks, locations) in premerged)
            {
                if (shard.Series.TryGetValue(timeline.Key, out var current) && ReferenceEquals(current, timeline))
                {
                    lock (timeline)
                    {
                        timeline.ToAgedBlocks(tier, level!.Value, blocks, blockSegment!, locations);
                    }
                }
            }
        }

        segment.Settle();
        blockSegment?.Settle();
        return true;
    }

    /// <summary>Puts back a bucket (or a pre-merged block) that a loaded snapshot's manifest lists in a segment.</summary>
    internal void PlaceAged(SeriesKey key, int tier, AgedBucket aged)
    {
        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            SeriesTimeline timeline = RecoveredTimeline(shard, key);
            lock (timeline)
            {
                if (SegmentLayout.OfBlockTier(tier) is { } block)
                {
                    timeline.AddAgedBlock(block.Tier, block.Level, aged);
                }
                else
                {
                    shard.EstimatedBytes += timeline.AddAged(tier, aged, NowMs());
                }
            }
        }
    }

    /// <summary>Remembers a span a loaded snapshot's manifest says the series lost to a damaged segment.</summary>
    internal void PlaceLost(SeriesKey key, LostSpan span)
    {
        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            SeriesTimeline timeline = RecoveredTimeline(shard, key);
            lock (timeline)
            {
                timeline.Lose(span);
            }
        }
    }

    /// <summary>
    /// A segment that could not even be opened: which series it held is unknown, so every series of
    /// its shard loses its range — every series of the store when the shard is unknown or the shard
    /// count changed since (null). Over-telling costs narrower answers; under-telling would be a
    /// silently wrong figure.
    /// </summary>
    internal void LoseShardSpan(int? fileShard, LostSpan span)
    {
        for (int s = 0; s < _shards.Length; s++)
        {
            if (fileShard is { } only && only < _shards.Length && s != only)
            {
                continue;
            }

            lock (_shards[s].Gate)
            {
                foreach (SeriesTimeline timeline in _shards[s].Series.Values)
                {
                    lock (timeline)
                    {
                        timeline.Lose(span);
                    }
                }
            }
        }
    }

    /// <summary>Pre-merged blocks the series point at in segment files, across the store.</summary>
    internal int AgedBlockCount()
    {
        int blocks = 0;
        foreach (SeriesShard shard in _shards)
        {
            lock (shard.Gate)
            {
                foreach (SeriesTimeline timeline in shard.Series.Values)
                {
                    lock (timeline)
                    {
                        blocks += timeline.AgedBlockCount;
                    }
                }
            }
        }

        return blocks;
    }
}
