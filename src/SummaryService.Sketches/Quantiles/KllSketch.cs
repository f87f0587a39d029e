using System.Buffers;

namespace SummaryService.Sketches.Quantiles;

/// <summary>
/// KLL quantile sketch (Karnin, Lang &amp; Liberty, "Optimal Quantile Approximation in Streams",
/// FOCS 2016) with lazy compaction: a level is compacted only when the whole sketch is full,
/// and then the lowest level that has reached its capacity.
/// </summary>
/// <remarks>
/// <para>Level h holds items that each stand for 2^h values. The top level may hold k items and
/// each level below holds 2/3 of the one above (at least <see cref="MinLevelWidth"/>), so the
/// sketch keeps about 3k items however long the stream. A compaction sorts a level and promotes
/// every second item, from a random offset, to the level above.</para>
/// <para>Error: one compaction at level h moves the estimated rank of any fixed point by 0 or
/// ±2^h with zero mean. The sketch counts compactions per level (merges add the counts), so the
/// rank error bound it reports is the data-dependent Hoeffding bound over the compactions that
/// actually happened — exactly 0 while nothing has been compacted.</para>
/// <para>Memory grows with the data: an empty sketch holds no item buffer and level buffers
/// grow as they fill.</para>
/// </remarks>
public sealed class KllSketch
{
    /// <summary>Top-level capacity used when none is given.</summary>
    public const int DefaultK = 200;

    /// <summary>Smallest accepted k.</summary>
    public const int MinK = 8;

    /// <summary>Largest accepted k.</summary>
    public const int MaxK = 1 << 16;

    /// <summary>
    /// No level is narrower than this, so low levels still compact in useful batches: at 16 rather than
    /// 8 a long stream's update costs about a quarter less (fewer, larger compactions on the low levels;
    /// 14.6 against 19.4 ns a value in one BenchmarkDotNet run) for ~45 more items held, and the fewer
    /// low-level compactions lower the rank error bound a little.
    /// </summary>
    public const int MinLevelWidth = 16;

    /// <summary>Enough levels for 2^62 values at any k.</summary>
    internal const int MaxLevels = 62;

    private static readonly double[] s_shrink = BuildShrinkTable();

    // Items are held as order keys (see OrderKeys), so sorts and merges compare integers.
    private long[][] _levels = [[]];
    private int[] _sizes = new int[1];
    private long[] _compactions = new long[1];
    private int _levelCount = 1;
    private int _retained;
    private int _capacity;

    // Σ of the level buffers' lengths, kept as they change: the store reads EstimatedBytes around
    // every append, and walking the levels touched a cold array header per level each time.
    private long _bufferedItems;
    private SplitMix64 _random;

    /// <summary>Creates an empty sketch.</summary>
    /// <param name="k">Top-level capacity; larger k means smaller error and more memory (about 3k items).</param>
    /// <param name="seed">Seed of the compaction coin. Leave it out in production so that sketches
    /// that will later be merged flip independent coins, which the error bound assumes; give it
    /// in tests to make runs reproducible.</param>
    public KllSketch(int k = DefaultK, ulong? seed = null)
    {
        RequireK(k);
        K = k;
        _random = new SplitMix64(seed ?? (ulong)Random.Shared.NextInt64());
        _capacity = TotalCapacity(k, 1);
        Min = Max = double.NaN;
    }

    /// <summary>Top-level capacity.</summary>
    public int K { get; }

    /// <summary>Rejects a k outside [<see cref="MinK"/>, <see cref="MaxK"/>], as the constructor does.</summary>
    internal static void RequireK(int k)
    {
        if (k is < MinK or > MaxK)
        {
            throw new ArgumentOutOfRangeException(nameof(k), k, $"k must be between {MinK} and {MaxK}.");
        }
    }

    /// <summary>Number of values folded in.</summary>
    public long Count { get; private set; }

    /// <summary>Exact smallest value; <see cref="double.NaN"/> while empty.</summary>
    public double Min { get; private set; }

    /// <summary>Exact largest value; <see cref="double.NaN"/> while empty.</summary>
    public double Max { get; private set; }

    /// <summary>True while no compaction has happened: every value is retained with weight 1.</summary>
    public bool IsExact
    {
        get
        {
            for (int h = 0; h < _levelCount; h++)
            {
                if (_compactions[h] != 0)
                {
                    return false;
                }
            }

            return true;
        }
    }

    /// <summary>Number of compactor levels in use.</summary>
    public int LevelCount => _levelCount;

    /// <summary>Number of items held across all levels.</summary>
    public int RetainedItems => _retained;

    /// <summary>Approximate heap bytes: object, level arrays (by their allocated length) and bookkeeping.</summary>
    public long EstimatedBytes
    {
        get
        {
            // Object header and fields ~72 B; each array carries a 24 B header.
            return 72 + (3 * 24) + (_levels.Length * (8 + 4 + 8 + 24)) + (8 * _bufferedItems);
        }
    }

    /// <summary>
    /// Σ over all compactions of (2^h)², the variance proxy of the rank error at any fixed point.
    /// </summary>
    public double RankErrorVarianceSum
    {
        get
        {
            double sum = 0;
            for (int h = 0; h < _levelCount; h++)
            {
                sum += _compactions[h] * Math.ScaleB(1.0, 2 * h);
            }

            return sum;
        }
    }

    /// <summary>
    /// Largest error of an estimated rank, in values, that holds with probability at least
    /// 1 − <paramref name="failureProbability"/> at any one point: Hoeffding's inequality over the
    /// compactions so far, t = sqrt(2 · Σ4^h · ln(2/p)).
    /// </summary>
    public double RankErrorCount(double failureProbability)
    {
        double v = RankErrorVarianceSum;
        return v == 0 ? 0 : Math.Sqrt(2.0 * v * Math.Log(2.0 / failureProbability));
    }

    /// <summary>Normalized rank error ε = t/n at the given confidence (for example 0.99).</summary>
    public double RankError(double confidence)
    {
        Confidence.Require(confidence);
        return Count == 0 ? 0 : RankErrorCount(1.0 - confidence) / Count;
    }

    /// <summary>Folds in one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        AddUnchecked(value);
    }

    /// <summary>Folds in a span of finite values; a span with a NaN or infinity is rejected whole.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        AddUnchecked(values);
    }

    internal void AddUnchecked(double value)
    {
        if (_retained >= _capacity || _sizes[0] >= Level0Limit(K, _levelCount))
        {
            Compress();
        }

        EnsureRoom(0, 1);
        _levels[0][_sizes[0]++] = OrderKeys.Of(value);
        _retained++;
        TrackRange(value, value, 1);
    }

    internal void AddUnchecked(ReadOnlySpan<double> values)
    {
        if (values.IsEmpty)
        {
            return;
        }

        // The extremes are tracked as keys while the values are converted: their order is the
        // values' order, −0 below +0, as Math.Min and Math.Max order them.
        long min = long.MaxValue;
        long max = long.MinValue;

        // A full sketch compacts every few values, so the span goes in as many small chunks, each
        // as large as the room left; the per-chunk work is kept to a few comparisons.
        int level0Limit = Level0Limit(K, _levelCount);
        int next = 0;
        while (next < values.Length)
        {
            if (_retained >= _capacity || _sizes[0] >= level0Limit)
            {
                int levels = _levelCount;
                Compress();
                if (_levelCount != levels)
                {
                    level0Limit = Level0Limit(K, _levelCount);
                }
            }

            int take = Math.Min(Math.Min(_capacity - _retained, level0Limit - _sizes[0]), values.Length - next);
            EnsureRoom(0, take);
            OrderKeys.Convert(values.Slice(next, take), _levels[0].AsSpan(_sizes[0], take), ref min, ref max);
            _sizes[0] += take;
            _retained += take;
            next += take;
        }

        TrackRange(OrderKeys.ValueOf(min), OrderKeys.ValueOf(max), values.Length);
    }

    /// <summary>Merges another sketch into this one. The other sketch is left unchanged.</summary>
    public void Merge(KllSketch other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (ReferenceEquals(other, this))
        {
            other = Clone();
        }

        if (other.Count == 0)
        {
            return;
        }

        while (_levelCount < other._levelCount)
        {
            AddLevel();
        }

        for (int h = 0; h < other._levelCount; h++)
        {
            ReadOnlySpan<long> items = other._levels[h].AsSpan(0, other._sizes[h]);
            if (h == 0)
            {
                EnsureRoom(0, items.Length);
                items.CopyTo(_levels[0].AsSpan(_sizes[0]));
                _sizes[0] += items.Length;
            }
            else
            {
                MergeSortedInto(h, items);
            }

            _compactions[h] += other._compactions[h];
        }

        _retained += other._retained;
        TrackRange(other.Min, other.Max, other.Count);
        while (_retained > _capacity)
        {
            Compress();
        }

        TrimLevels();
    }

    /// <summary>
    /// Merges what a never-compacted one-level sketch of <paramref name="items"/> (in that order,
    /// with those exact extremes) would merge: the same steps as <see cref="Merge"/> with such a
    /// sketch, without building it. Small series sketches keep their values raw and merge this way.
    /// </summary>
    internal void MergeUncompacted(ReadOnlySpan<double> items, double min, double max)
    {
        if (items.IsEmpty)
        {
            return;
        }

        EnsureRoom(0, items.Length);
        long ignoredMin = long.MaxValue;
        long ignoredMax = long.MinValue;
        OrderKeys.Convert(items, _levels[0].AsSpan(_sizes[0], items.Length), ref ignoredMin, ref ignoredMax);
        _sizes[0] += items.Length;
        _retained += items.Length;
        TrackRange(min, max, items.Length);
        while (_retained > _capacity)
        {
            Compress();
        }

        TrimLevels();
    }

    /// <summary>
    /// Gives back buffer space beyond the items held, for a sketch that is done growing (a closed
    /// time bucket). Answers and serialized form are unchanged; a later update regrows what it needs.
    /// </summary>
    public void TrimExcess()
    {
        if (_levels.Length > _levelCount)
        {
            Array.Resize(ref _levels, _levelCount);
            Array.Resize(ref _sizes, _levelCount);
            Array.Resize(ref _compactions, _levelCount);
        }

        for (int h = 0; h < _levelCount; h++)
        {
            if (_levels[h].Length > _sizes[h])
            {
                ResizeLevel(h, _sizes[h]);
            }
        }
    }

    /// <summary>Creates an independent copy, including the state of its random source.</summary>
    public KllSketch Clone()
    {
        var copy = (KllSketch)MemberwiseClone();
        copy._levels = new long[_levels.Length][];
        for (int h = 0; h < _levels.Length; h++)
        {
            copy._levels[h] = _levels[h].AsSpan(0, _sizes[h]).ToArray();
        }

        copy._bufferedItems = _retained;
        copy._sizes = (int[])_sizes.Clone();
        copy._compactions = (long[])_compactions.Clone();
        return copy;
    }

    /// <summary>Builds the sorted, weighted view that answers rank and quantile queries.</summary>
    public KllSortedView CreateView()
    {
        // The merges work in four borrowed arrays; only the values and the running weights outlive
        // this call, each written once into an array of its own.
        long[] keys = ArrayPool<long>.Shared.Rent(_retained);
        long[] weights = ArrayPool<long>.Shared.Rent(_retained);
        long[] scratchKeys = ArrayPool<long>.Shared.Rent(_retained);
        long[] scratchWeights = ArrayPool<long>.Shared.Rent(_retained);
        try
        {
            // Level 0 is the only unsorted level; every level above is kept sorted, so the view is a
            // sequence of linear merges rather than a sort of everything.
            int filled = _sizes[0];
            _levels[0].AsSpan(0, filled).CopyTo(keys);
            RunSort.Sort(keys.AsSpan(0, filled));
            weights.AsSpan(0, filled).Fill(1);
            for (int h = 1; h < _levelCount; h++)
            {
                int size = _sizes[h];
                if (size == 0)
                {
                    continue;
                }

                long weight = 1L << h;
                MergeWeighted(keys, weights, filled, _levels[h].AsSpan(0, size), weight, scratchKeys, scratchWeights);
                (keys, scratchKeys) = (scratchKeys, keys);
                (weights, scratchWeights) = (scratchWeights, weights);
                filled += size;
            }

            long[] cumulative = GC.AllocateUninitializedArray<long>(filled);
            long running = 0;
            for (int i = 0; i < filled; i++)
            {
                running += weights[i];
                cumulative[i] = running;
            }

            return new KllSortedView(OrderKeys.ToValues(keys.AsSpan(0, filled)), cumulative, Count, Min, Max);
        }
        finally
        {
            ArrayPool<long>.Shared.Return(keys);
            ArrayPool<long>.Shared.Return(weights);
            ArrayPool<long>.Shared.Return(scratchKeys);
            ArrayPool<long>.Shared.Return(scratchWeights);
        }
    }

    /// <summary>Capacity of level <paramref name="level"/> when <paramref name="levelCount"/> levels are in use.</summary>
    public static int LevelCapacity(int k, int level, int levelCount)
    {
        int depth = levelCount - 1 - level;
        return Math.Max(MinLevelWidth, (int)Math.Ceiling(k * s_shrink[depth]));
    }

    /// <summary>The items of one level as values, in the order the level holds them.</summary>
    internal double[] LevelValues(int level) => OrderKeys.ToValues(_levels[level].AsSpan(0, _sizes[level]));

    internal long LevelCompactions(int level) => _compactions[level];

    internal ulong RandomState => _random.State;

    /// <summary>Rebuilds a sketch from validated parts (see <c>SketchCodec</c>).</summary>
    internal static KllSketch Restore(int k, long count, double min, double max, double[][] levels, long[] compactions, ulong randomState)
    {
        var sketch = new KllSketch(k, randomState)
        {
            Count = count,
            Min = count == 0 ? double.NaN : min,
            Max = count == 0 ? double.NaN : max,
            _levelCount = levels.Length,
            _levels = levels.Select(l => OrderKeys.Of(l)).ToArray(),
            _sizes = levels.Select(l => l.Length).ToArray(),
            _compactions = compactions,
        };
        sketch._retained = sketch._sizes.Sum();
        sketch._bufferedItems = sketch._retained;
        sketch._capacity = TotalCapacity(k, levels.Length);
        return sketch;
    }

    /// <summary>
    /// Most items level 0 may collect before it is compacted even though the sketch has room: four
    /// times its capacity. Free room left by compactions higher up would otherwise pour into level 0
    /// in runs of hundreds, growing its buffer for good, for an accuracy gain confined to level 0,
    /// whose compactions weigh least in the error bound. A young sketch (level 0 at capacity k) is
    /// unaffected, so it stays exact up to k values.
    /// </summary>
    internal static int Level0Limit(int k, int levelCount) => 4 * LevelCapacity(k, 0, levelCount);

    internal static int TotalCapacity(int k, int levelCount)
    {
        int total = 0;
        for (int h = 0; h < levelCount; h++)
        {
            total += LevelCapacity(k, h, levelCount);
        }

        return total;
    }

    private void TrackRange(double min, double max, long count)
    {
        if (Count == 0)
        {
            Min = min;
            Max = max;
        }
        else
        {
            Min = Math.Min(Min, min);
            Max = Math.Max(Max, max);
        }

        Count += count;
    }

    private void Compress()
    {
        int h = 0;
        while (_sizes[h] < LevelCapacity(K, h, _levelCount))
        {
            h++;
        }

        if (h == _levelCount - 1)
        {
            AddLevel();
        }

        CompactLevel(h);
    }

    private void CompactLevel(int h)
    {
        long[] items = _levels[h];
        int size = _sizes[h];
        if (h == 0)
        {
            RunSort.Sort(items.AsSpan(0, size));
        }

        // An odd item out stays behind at this level with its weight; any even-sized sorted run
        // may be compacted without changing the error argument.
        int even = size & ~1;
        bool odd = (size & 1) == 1;
        long leftover = odd ? items[even] : 0;
        int offset = _random.NextBit();
        int half = even / 2;
        for (int i = 0; i < half; i++)
        {
            items[i] = items[(2 * i) + offset];
        }

        MergeSortedInto(h + 1, items.AsSpan(0, half));
        if (odd)
        {
            items[0] = leftover;
        }

        _sizes[h] = odd ? 1 : 0;
        _compactions[h]++;
        _retained -= half;

        // The emptied buffer is kept: a lazily compacted level swells to a few times its capacity
        // before each turn, and giving the buffer back here meant regrowing it in steps every
        // time, a tenth of the update cost. TrimExcess gives it back once the sketch stops growing.
    }

    private void AddLevel()
    {
        if (_levelCount == MaxLevels)
        {
            throw new InvalidOperationException("KLL sketch cannot hold more levels.");
        }

        if (_levelCount == _levels.Length)
        {
            int grown = _levelCount + 4;
            Array.Resize(ref _levels, grown);
            Array.Resize(ref _sizes, grown);
            Array.Resize(ref _compactions, grown);
            for (int h = _levelCount; h < grown; h++)
            {
                _levels[h] = [];
            }
        }

        _levelCount++;
        _capacity = TotalCapacity(K, _levelCount);
        TrimLevels();
    }

    // Buffers keep their high-water size: a young sketch's level 0 holds up to k items and a merge
    // target briefly holds two sketches' worth. Shrinking whatever is over twice what its level can
    // need keeps a long-lived sketch near its ~3k items; it runs only on level changes and merges.
    private void TrimLevels()
    {
        for (int h = 0; h < _levelCount; h++)
        {
            int need = Math.Max(_sizes[h], LevelCapacity(K, h, _levelCount));
            if (_levels[h].Length > 2 * need)
            {
                ResizeLevel(h, need);
            }
        }
    }

    private void EnsureRoom(int level, int extra)
    {
        long[] items = _levels[level];
        int needed = _sizes[level] + extra;
        if (needed <= items.Length)
        {
            return;
        }

        int grown = Math.Max(needed, Math.Max(MinLevelWidth, items.Length + (items.Length / 2)));
        ResizeLevel(level, grown);
    }

    private void ResizeLevel(int level, int length)
    {
        _bufferedItems += length - _levels[level].Length;
        Array.Resize(ref _levels[level], length);
    }

    private void MergeSortedInto(int level, ReadOnlySpan<long> incoming)
    {
        if (incoming.IsEmpty)
        {
            return;
        }

        EnsureRoom(level, incoming.Length);
        int size = _sizes[level];
        Span<long> target = _levels[level].AsSpan(0, size + incoming.Length);
        RunSort.Merge(target[..size], incoming, target);
        _sizes[level] += incoming.Length;
    }

    private static void MergeWeighted(long[] values, long[] weights, int filled, ReadOnlySpan<long> level, long weight, long[] outValues, long[] outWeights)
    {
        int i = 0;
        int j = 0;
        int write = 0;
        while (i < filled && j < level.Length)
        {
            if (values[i] <= level[j])
            {
                outValues[write] = values[i];
                outWeights[write++] = weights[i++];
            }
            else
            {
                outValues[write] = level[j++];
                outWeights[write++] = weight;
            }
        }

        while (i < filled)
        {
            outValues[write] = values[i];
            outWeights[write++] = weights[i++];
        }

        while (j < level.Length)
        {
            outValues[write] = level[j++];
            outWeights[write++] = weight;
        }
    }

    private static double[] BuildShrinkTable()
    {
        var table = new double[MaxLevels + 1];
        for (int depth = 0; depth < table.Length; depth++)
        {
            table[depth] = Math.Pow(2.0 / 3.0, depth);
        }

        return table;
    }
}
