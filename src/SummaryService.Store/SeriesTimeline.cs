using System.Numerics;
using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>
/// One series' buckets, tier by tier. Every value lives in exactly one bucket: the finest tier
/// whose bucket for its timestamp has not yet aged out. Not thread-safe; the owning shard locks.
/// </summary>
/// <remarks>
/// Buckets of the first tier keep the full sketch; every bucket of a later tier is kept compact
/// (<see cref="SeriesSketch.Compact"/>: moments, log buckets and exact mode counts), however it got
/// there — rolled up, read back from a snapshot, uploaded or filled by late values — so that an
/// aged bucket costs a few hundred bytes to a couple of kilobytes and answers from its log buckets.
/// </remarks>
internal sealed partial class SeriesTimeline(SeriesKey key, StoreOptions options)
{
    /// <summary>
    /// Buckets per cached block, by level. Window answers merge the largest whole blocks that fit,
    /// so an hour of 10 s buckets takes a few dozen merges instead of 360.
    /// </summary>
    internal static readonly int[] BlockFactors = [6, 60, 600];

    private readonly SortedList<long, SeriesSketch>[] _tiers = CreateTiers(options.Tiers.Count);
    private readonly Dictionary<BlockKey, SeriesSketch> _blocks = [];

    public SeriesKey Key { get; } = key;

    public int BucketCount => _tiers.Sum(t => t.Count) + AgedCount;

    public IReadOnlyList<SortedList<long, SeriesSketch>> Tiers => _tiers;

    /// <summary>Changes whenever a cached block is dropped; a block built from copies taken at another epoch is not cached.</summary>
    public long Epoch { get; private set; }

    public int CachedBlocks => _blocks.Count;

    /// <summary>Adds values whose timestamps the validator has resolved into runs; returns the change in estimated bytes.</summary>
    public long Add(ReadOnlySpan<double> values, ReadOnlySpan<TimeRun> runs, long nowMs)
    {
        long grown = 0;
        int start = 0;
        int run = 0;
        while (run < runs.Length)
        {
            var where = Locate(runs[run].TimeUnixMs, nowMs);
            int end = start + runs[run++].Count;
            while (run < runs.Length && Locate(runs[run].TimeUnixMs, nowMs) == where)
            {
                end += runs[run++].Count;
            }

            grown += AddToBucket(where.Tier, where.BucketStart, values[start..end]);
            start = end;
        }

        return grown;
    }

    /// <summary>Estimated bytes a batch would add at most: one fresh bucket per distinct bucket it touches.</summary>
    public long NewBucketsFor(ReadOnlySpan<TimeRun> runs, long nowMs)
    {
        long fresh = 0;
        (int, long) last = (-1, 0);
        foreach (TimeRun run in runs)
        {
            var where = Locate(run.TimeUnixMs, nowMs);
            if (where != last && !_tiers[where.Tier].ContainsKey(where.BucketStart) && !AgedStarts(where.Tier).Contains(where.BucketStart))
            {
                fresh++;
            }

            last = where;
        }

        return fresh;
    }

    /// <summary>
    /// Places a whole bucket read back from a snapshot, merging into a bucket already there; returns
    /// the change in estimated bytes. With an unchanged tier layout the bucket goes back where it was
    /// (rollup moves it on when due); otherwise where the current layout puts its start time.
    /// </summary>
    public long Place(int savedTier, long start, SeriesSketch sketch, long nowMs)
    {
        var (tier, bucketStart) = savedTier >= 0 ? (savedTier, start) : Locate(start, nowMs);
        Invalidate(tier, bucketStart);
        return PutInto(tier, bucketStart, sketch);
    }

    /// <summary>Moves buckets that aged out of a tier into the next one and drops those past the last; returns the change in estimated bytes.</summary>
    public long Roll(long nowMs)
    {
        long change = 0;
        for (int i = 0; i < _tiers.Length; i++)
        {
            var tier = _tiers[i];
            long width = options.Tiers[i].WidthMs;
            long horizon = nowMs - options.Tiers[i].RetentionMs;
            change += RollAged(i, horizon);
            while (tier.Count > 0 && tier.Keys[0] + width <= horizon)
            {
                long bucketStart = tier.Keys[0];
                SeriesSketch sketch = tier.Values[0];
                tier.RemoveAt(0);
                Invalidate(i, bucketStart);
                change -= sketch.EstimatedBytes;
                if (i + 1 < _tiers.Length)
                {
                    long coarse = AlignDown(bucketStart, options.Tiers[i + 1].WidthMs);
                    Invalidate(i + 1, coarse);
                    change += PutInto(i + 1, coarse, sketch);
                }
            }
        }

        return change;
    }

    /// <summary>
    /// Widens <paramref name="range"/> until no bucket of this series straddles its edges: every
    /// bucket overlapping the result lies inside it. Tiers nest (each width a multiple of the one
    /// below), so this settles after at most one pass per tier.
    /// </summary>
    public void WidenToBuckets(ref TimeWindow range)
    {
        bool widened = true;
        while (widened)
        {
            widened = false;
            for (int i = 0; i < _tiers.Length; i++)
            {
                long width = options.Tiers[i].WidthMs;
                foreach (IList<long> starts in StartLists(i))
                {
                    int first = FirstEndingAfter(starts, range.FromUnixMs, width);
                    if (first < starts.Count && starts[first] < range.FromUnixMs && starts[first] < range.ToUnixMs)
                    {
                        range = range with { FromUnixMs = starts[first] };
                        widened = true;
                    }

                    int last = FirstEndingAfter(starts, range.ToUnixMs - 1, width);
                    if (last < starts.Count && starts[last] < range.ToUnixMs && starts[last] + width > range.ToUnixMs)
                    {
                        range = range with { ToUnixMs = starts[last] + width };
                        widened = true;
                    }
                }
            }
        }
    }

    /// <summary>
    /// The pieces that together hold exactly the buckets overlapping <paramref name="range"/>: the
    /// largest blocks lying wholly inside it and wholly in the past (cached, or to be built from
    /// copies), and copies of the buckets left over. Blocks still open to the present are never
    /// cached, since ingest would drop them at once.
    /// </summary>
    public void PlanParts(TimeWindow range, long nowMs, List<QueryPart> into)
    {
        for (int i = 0; i < _tiers.Length; i++)
        {
            var (starts, copyAt) = View(i, range);
            long width = options.Tiers[i].WidthMs;
            int j = FirstEndingAfter(starts, range.FromUnixMs, width);
            while (j < starts.Count && starts[j] < range.ToUnixMs)
            {
                long start = starts[j];
                BlockKey? block = null;
                for (int level = BlockFactors.Length - 1; level >= 0 && block is null; level--)
                {
                    long blockWidth = width * BlockFactors[level];
                    long blockStart = AlignDown(start, blockWidth);
                    long blockEnd = blockStart + blockWidth;
                    if (blockStart >= range.FromUnixMs && blockEnd <= range.ToUnixMs && blockEnd <= nowMs)
                    {
                        block = new BlockKey(i, level, blockStart);
                    }
                }

                if (block is not { } key)
                {
                    if (copyAt(j) is { } copy)
                    {
                        into.Add(QueryPart.Bucket(copy));
                    }

                    j++;
                    continue;
                }

                long end = key.Start + (width * BlockFactors[key.Level]);
                if (_blocks.TryGetValue(key, out var cached) || TryLoadAgedBlock(key, out cached))
                {
                    into.Add(QueryPart.Cached(key, cached));
                    while (j < starts.Count && starts[j] < end)
                    {
                        j++;
                    }

                    continue;
                }

                var copies = new List<SeriesSketch>();
                while (j < starts.Count && starts[j] < end)
                {
                    if (copyAt(j) is { } copy)
                    {
                        copies.Add(copy);
                    }

                    j++;
                }

                into.Add(QueryPart.ToBuild(key, copies));
            }
        }
    }

    /// <summary>Keeps blocks built outside the lock, unless a block was dropped since their copies were taken.</summary>
    public void CacheBlocks(IEnumerable<QueryPart> parts, long epochWhenPlanned)
    {
        if (Epoch != epochWhenPlanned)
        {
            return;
        }

        foreach (QueryPart part in parts)
        {
            if (part.Block is { } key && part.Buckets is not null && part.Ready is not null)
            {
                _blocks.TryAdd(key, part.Ready);
            }
        }
    }

    /// <summary>Seed of a block's quantile sketch, from its identity, so a rebuilt block is the same block.</summary>
    public ulong SeedFor(BlockKey block) =>
        SeedFor(block.Tier, block.Start) ^ ((ulong)(block.Level + 1) << 48);

    public long CachedBlockBytes => _blocks.Values.Sum(b => b.EstimatedBytes);

    public long EstimatedBytes => _tiers.Sum(t => t.Values.Sum(s => s.EstimatedBytes));

    public long EstimatedBytesOfTier(int tier) => _tiers[tier].Values.Sum(s => s.EstimatedBytes);

    // A change to a bucket drops every cached block that contains it.
    private void Invalidate(int tier, long bucketStart)
    {
        DropAgedBlocks(tier, bucketStart);
        if (_blocks.Count == 0)
        {
            return;
        }

        long width = options.Tiers[tier].WidthMs;
        for (int level = 0; level < BlockFactors.Length; level++)
        {
            long blockWidth = width * BlockFactors[level];
            if (_blocks.Remove(new BlockKey(tier, level, AlignDown(bucketStart, blockWidth))))
            {
                Epoch++;
            }
        }
    }

    internal static long AlignDown(long t, long width) => t - (((t % width) + width) % width);

    private (int Tier, long BucketStart) Locate(long t, long nowMs)
    {
        for (int i = 0; i < _tiers.Length; i++)
        {
            long width = options.Tiers[i].WidthMs;
            long start = AlignDown(t, width);
            if (start + width > nowMs - options.Tiers[i].RetentionMs || i == _tiers.Length - 1)
            {
                return (i, start);
            }
        }

        throw new InvalidOperationException("unreachable: the last tier always accepts");
    }

    private long AddToBucket(int tier, long bucketStart, ReadOnlySpan<double> values)
    {
        long restored = Materialize(tier, bucketStart);
        Invalidate(tier, bucketStart);
        var buckets = _tiers[tier];
        if (!buckets.TryGetValue(bucketStart, out var sketch))
        {
            sketch = new SeriesSketch(options.Sketch, SeedFor(tier, bucketStart));
            buckets.Add(bucketStart, sketch);
            sketch.Add(values);
            KeepForm(tier, sketch);
            return sketch.EstimatedBytes + TrimBucketBefore(buckets, bucketStart);
        }

        long previous = sketch.EstimatedBytes;
        sketch.Add(values);
        KeepForm(tier, sketch);
        return restored + sketch.EstimatedBytes - previous;
    }

    // Puts a whole sketch into a bucket (merging into one already there) in the tier's form; returns
    // the change in estimated bytes. Compacted before a merge so that no KLL part or count-min table
    // is built only to be dropped.
    private long PutInto(int tier, long bucketStart, SeriesSketch sketch)
    {
        long restored = Materialize(tier, bucketStart);
        KeepForm(tier, sketch);
        var buckets = _tiers[tier];
        if (buckets.TryGetValue(bucketStart, out var existing))
        {
            long before = existing.EstimatedBytes;
            existing.Merge(sketch);
            KeepForm(tier, existing);
            if (tier > 0)
            {
                // An aged bucket grows by whole merges, not by values: no slack to keep.
                existing.TrimExcess();
            }

            return restored + existing.EstimatedBytes - before;
        }

        buckets.Add(bucketStart, sketch);
        return restored + sketch.EstimatedBytes;
    }

    // Past the first tier a bucket is compact; compacting one that already is costs a few checks.
    private static void KeepForm(int tier, SeriesSketch sketch)
    {
        if (tier > 0)
        {
            sketch.Compact();
        }
    }

    // A series writes into its newest bucket; once a newer one opens, the one before it is done
    // growing and gives back its working space. Returns the change in estimated bytes (≤ 0).
    private static long TrimBucketBefore(SortedList<long, SeriesSketch> buckets, long bucketStart)
    {
        int at = buckets.IndexOfKey(bucketStart);
        if (at == 0)
        {
            return 0;
        }

        SeriesSketch previous = buckets.Values[at - 1];
        long before = previous.EstimatedBytes;
        previous.TrimExcess();
        return previous.EstimatedBytes - before;
    }

    // Each bucket's coin sequence comes from its own identity: independent across buckets, as the
    // error bound needs, yet the same when a log replay rebuilds the bucket from the same values.
    private ulong SeedFor(int tier, long bucketStart) =>
        Key.Hash ^ BitOperations.RotateLeft((ulong)bucketStart * 0x9E3779B97F4A7C15UL, 17) ^ ((ulong)tier << 56);

    private static int FirstEndingAfter(IList<long> starts, long from, long width)
    {
        int lo = 0;
        int hi = starts.Count;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (starts[mid] + width <= from)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }

    private static SortedList<long, SeriesSketch>[] CreateTiers(int count)
    {
        var tiers = new SortedList<long, SeriesSketch>[count];
        for (int i = 0; i < count; i++)
        {
            tiers[i] = [];
        }

        return tiers;
    }
}
