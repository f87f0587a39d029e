using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// Relative-error quantile sketch of logarithmic buckets (the method of Masson, Rim &amp; Lee, PVLDB
/// 12(12), 2019) on the bucket index mapping of the OpenTelemetry exponential histogram: exact counts
/// per bucket for positive and (mirrored) negative magnitudes, and an exact count of zeros.
/// </summary>
/// <remarks>
/// <para>Counts are exact, so the r-th smallest value lies in a known bucket: a deterministic value
/// interval whose relative half-width about its midpoint is (base − 1)/(base + 1), 0.54% at the
/// default scale 6.</para>
/// <para>Each range keeps at most <see cref="MaxBuckets"/> bucket indices between its smallest and
/// largest occupied one. A value that would stretch a range further lowers the scale by one — base
/// squared, every two neighbouring buckets combined into one, exactly (the data model's "perfect
/// subsetting") — until it fits; the bound then reported is the one of the scale in force. Merges
/// are exact the same way: the finer sketch is folded into the coarser scale.</para>
/// <para>Memory follows the data: nothing is allocated until a value arrives, a range spans only
/// the indices its values reached (plus growth slack, given back by <see cref="TrimExcess"/>), and
/// counters are as narrow as the largest count allows.</para>
/// </remarks>
public sealed class LogBucketSketch
{
    /// <summary>Scale of a new sketch: base 2^(1/64), relative bound 0.54%.</summary>
    public const int DefaultScale = 6;

    /// <summary>Bucket indices a range may span at most: 32 octaves (9.6 decades) at the default scale.</summary>
    public const int DefaultMaxBuckets = 2048;

    /// <summary>Finest scale: base 2^(1/256), relative bound 0.14%.</summary>
    public const int MaxScale = ExponentialMapping.MaxScale;

    /// <summary>Coarsest scale: base 2^1024.</summary>
    public const int MinScale = ExponentialMapping.MinScale;

    /// <summary>Smallest accepted <see cref="MaxBuckets"/>: at the coarsest scale every double fits in three.</summary>
    public const int MinMaxBuckets = 8;

    /// <summary>Largest accepted <see cref="MaxBuckets"/>.</summary>
    public const int MaxMaxBuckets = 1 << 16;

    private ExponentialMapping _mapping;
    private BucketCounts? _positive;
    private BucketCounts? _negative;

    /// <summary>Creates an empty sketch.</summary>
    /// <param name="scale">Starting scale, between <see cref="ExponentialMapping.MinScale"/> and <see cref="ExponentialMapping.MaxScale"/>.</param>
    /// <param name="maxBuckets">Bucket indices a range may span before the scale drops.</param>
    public LogBucketSketch(int scale = DefaultScale, int maxBuckets = DefaultMaxBuckets)
    {
        RequireSettings(scale, maxBuckets);
        _mapping = ExponentialMapping.ForScale(scale);
        MaxBuckets = maxBuckets;
    }

    /// <summary>Current scale; it only ever drops.</summary>
    public int Scale => _mapping.Scale;

    /// <summary>base = 2^(2^−scale) at the current scale.</summary>
    public double Base => _mapping.Base;

    /// <summary>
    /// (base − 1)/(base + 1) at the current scale: the largest relative distance from the midpoint
    /// of a value interval read from the buckets to any value in it, for values of one sign.
    /// </summary>
    public double RelativeError => _mapping.RelativeError;

    /// <summary>Bucket indices a range may span.</summary>
    public int MaxBuckets { get; }

    /// <summary>Number of values counted.</summary>
    public long Count { get; private set; }

    /// <summary>Number of zeros (+0 and −0) counted.</summary>
    public long ZeroCount { get; private set; }

    /// <summary>Approximate heap bytes: this object and both ranges.</summary>
    public long EstimatedBytes => 64 + (_positive?.EstimatedBytes ?? 0) + (_negative?.EstimatedBytes ?? 0);

    internal ExponentialMapping Mapping => _mapping;

    /// <summary>Rejects the settings the constructor rejects.</summary>
    internal static void RequireSettings(int scale, int maxBuckets)
    {
        ExponentialMapping.RequireScale(scale);
        if (maxBuckets is < MinMaxBuckets or > MaxMaxBuckets)
        {
            throw new ArgumentOutOfRangeException(nameof(maxBuckets), maxBuckets, $"maxBuckets must be between {MinMaxBuckets} and {MaxMaxBuckets}.");
        }
    }

    /// <summary>Counts one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        AddUnchecked(value);
    }

    /// <summary>Counts a span of finite values; a span holding a NaN or infinity is rejected whole.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        AddUnchecked(values);
    }

    /// <summary>Count of positive bucket <paramref name="index"/>.</summary>
    public long PositiveCount(int index) => _positive?[index] ?? 0;

    /// <summary>Count of negative bucket <paramref name="index"/> (magnitudes in (base^index, base^(index+1)]).</summary>
    public long NegativeCount(int index) => _negative?[index] ?? 0;

    /// <summary>Occupied positive buckets, ascending index.</summary>
    public IEnumerable<(int Index, long Count)> PositiveBuckets() => _positive?.Buckets() ?? [];

    /// <summary>Occupied negative buckets, ascending index (ascending magnitude).</summary>
    public IEnumerable<(int Index, long Count)> NegativeBuckets() => _negative?.Buckets() ?? [];

    /// <summary>Occupied positive buckets as index and count arrays, ascending index.</summary>
    internal (int[] Indices, long[] Counts) PositiveArrays() => _positive?.OccupiedBuckets() ?? ([], []);

    /// <summary>Occupied negative buckets as index and count arrays, ascending index (ascending magnitude).</summary>
    internal (int[] Indices, long[] Counts) NegativeArrays() => _negative?.OccupiedBuckets() ?? ([], []);

    internal void AddUnchecked(double value)
    {
        AddOne(value);
        Count++;
    }

    internal void AddUnchecked(ReadOnlySpan<double> values)
    {
        ReadOnlySpan<long> bits = MemoryMarshal.Cast<double, long>(values);
        int i = 0;
        while (i < bits.Length)
        {
            BucketCounts? range = bits[i] < 0 ? _negative : _positive;
            if (range is not null && range.Length > 0)
            {
                int stop = AddRun(bits, i, bits[i] & long.MinValue, range);
                range.Counted(stop - i);
                i = stop;
                if (i == bits.Length)
                {
                    break;
                }
            }

            // Whatever stopped the run: the other sign, zero, a subnormal, an index outside the
            // cells, a counter at its limit.
            AddOne(values[i]);
            i++;
        }

        Count += values.Length;
    }

    /// <summary>Merges another sketch into this one at the finer scale both can hold; the other is left unchanged.</summary>
    public void Merge(LogBucketSketch other)
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

        int scale = Math.Min(Scale, other.Scale);
        while (!Fits(_positive, Scale, other._positive, other.Scale, scale) || !Fits(_negative, Scale, other._negative, other.Scale, scale))
        {
            scale--;
        }

        DownscaleTo(scale);
        int shift = other.Scale - scale;
        MergeRange(ref _positive, other._positive, shift);
        MergeRange(ref _negative, other._negative, shift);
        ZeroCount += other.ZeroCount;
        Count += other.Count;
    }

    /// <summary>Lowers the scale to <paramref name="scale"/> (no change when already there or coarser), combining buckets exactly.</summary>
    public void DownscaleTo(int scale)
    {
        ExponentialMapping.RequireScale(scale);
        int by = Scale - scale;
        if (by <= 0)
        {
            return;
        }

        _positive = _positive?.Downscaled(by);
        _negative = _negative?.Downscaled(by);
        _mapping = ExponentialMapping.ForScale(scale);
    }

    /// <summary>Gives back growth slack and narrows counters, for a sketch that is done growing. Answers and serialized form are unchanged.</summary>
    public void TrimExcess()
    {
        _positive?.TrimExcess();
        _negative?.TrimExcess();
    }

    /// <summary>An independent copy, in the same form.</summary>
    public LogBucketSketch Clone()
    {
        var copy = (LogBucketSketch)MemberwiseClone();
        copy._positive = _positive?.Clone();
        copy._negative = _negative?.Clone();
        return copy;
    }

    /// <summary>Rebuilds a sketch from validated parts (see <c>SketchCodec</c>).</summary>
    internal static LogBucketSketch Restore(int scale, int maxBuckets, long zeroCount, IEnumerable<(int Index, long Count)> positive, IEnumerable<(int Index, long Count)> negative)
    {
        var sketch = new LogBucketSketch(scale, maxBuckets) { ZeroCount = zeroCount, Count = zeroCount };
        foreach ((int index, long count) in positive)
        {
            sketch.Count += count;
            (sketch._positive ??= new BucketCounts()).Add(index, count, maxBuckets);
        }

        foreach ((int index, long count) in negative)
        {
            sketch.Count += count;
            (sketch._negative ??= new BucketCounts()).Add(index, count, maxBuckets);
        }

        sketch.TrimExcess();
        return sketch;
    }

    private void AddOne(double value)
    {
        long bits = BitConverter.DoubleToInt64Bits(value);
        if ((bits & long.MaxValue) == 0)
        {
            ZeroCount++;
            return;
        }

        int index = _mapping.IndexOf(value);
        if (bits < 0)
        {
            AddToRange(ref _negative, index, 1);
        }
        else
        {
            AddToRange(ref _positive, index, 1);
        }
    }

    // Adds to a range, lowering the scale first while the range would span more than MaxBuckets.
    private void AddToRange(ref BucketCounts? range, int index, long count)
    {
        range ??= new BucketCounts();
        while (!range.Covers(index))
        {
            (int low, int high) = range.Occupied() ?? (index, index);
            if ((long)Math.Max(high, index) - Math.Min(low, index) < MaxBuckets)
            {
                break;
            }

            DownscaleTo(Scale - 1);
            index >>= 1;
        }

        range.Add(index, count, MaxBuckets);
    }

    private void MergeRange(ref BucketCounts? range, BucketCounts? other, int shift)
    {
        if (other is not null)
        {
            (range ??= new BucketCounts()).AddFrom(other, shift, MaxBuckets);
        }
    }

    // Whether both ranges, folded to `scale`, span at most MaxBuckets indices together.
    private bool Fits(BucketCounts? mine, int myScale, BucketCounts? theirs, int theirScale, int scale)
    {
        long low = long.MaxValue;
        long high = long.MinValue;
        if (mine?.Occupied() is (int myLow, int myHigh))
        {
            (low, high) = (myLow >> (myScale - scale), myHigh >> (myScale - scale));
        }

        if (theirs?.Occupied() is (int theirLow, int theirHigh))
        {
            low = Math.Min(low, theirLow >> (theirScale - scale));
            high = Math.Max(high, theirHigh >> (theirScale - scale));
        }

        return low > high || high - low < MaxBuckets;
    }

    private int AddRun(ReadOnlySpan<long> bits, int start, long sign, BucketCounts range) => range.WidthLog2 switch
    {
        0 => AddRun<byte>(bits, start, sign, range.Cells, range.First),
        1 => AddRun<ushort>(bits, start, sign, range.Cells, range.First),
        2 => AddRun<uint>(bits, start, sign, range.Cells, range.First),
        _ => AddRun<ulong>(bits, start, sign, range.Cells, range.First),
    };

    // The update loop: values of one sign whose bucket has a cell and whose counter has room, in
    // a few integer operations each (ExponentialMapping.IndexOf, inlined); stops at the first other.
    // The slot index is below the table's length by construction (the top bits of a significand)
    // and the cell index is range-checked once, so both are read without further bounds checks.
    private int AddRun<T>(ReadOnlySpan<long> bits, int start, long sign, byte[] raw, int first)
        where T : unmanaged, IBinaryInteger<T>, IUnsignedNumber<T>
    {
        // With the sign bit flipped off for this range's sign, a normal magnitude of that sign lies
        // in [2^52, 2^63): one unsigned comparison turns away the other sign, zeros and subnormals.
        const ulong SmallestNormal = 1UL << ExponentialMapping.SignificandBits;
        const ulong NormalSpan = (1UL << 63) - SmallestNormal;
        Span<T> cells = MemoryMarshal.Cast<byte, T>(raw.AsSpan());
        ref T cell0 = ref MemoryMarshal.GetReference(cells);
        uint length = (uint)cells.Length;
        ExponentialMapping mapping = _mapping;
        ref long slot0 = ref MemoryMarshal.GetArrayDataReference(mapping.Slots);
        int slotShift = mapping.SlotShift;
        int up = mapping.ScaleUp;
        int down = mapping.ScaleDown;

        // index = ((biased exponent − 1023) << up) + (boundaries below − 1), before the shift down.
        int bias = -(1023 << up) - 1;
        int i = start;
        for (; i < bits.Length; i++)
        {
            ulong magnitude = (ulong)(bits[i] ^ sign);
            if (magnitude - SmallestNormal >= NormalSpan)
            {
                break;
            }

            long significand = (long)(magnitude & ExponentialMapping.SignificandMask);
            long slot = Unsafe.Add(ref slot0, (nint)(significand >> slotShift));
            int index = (((int)(magnitude >> ExponentialMapping.SignificandBits) << up) + (int)(slot & ExponentialMapping.BelowMask) + ((slot >> ExponentialMapping.BelowBits) < significand ? 1 : 0) + bias) >> down;
            uint cell = (uint)(index - first);
            if (cell >= length)
            {
                break;
            }

            ref T counter = ref Unsafe.Add(ref cell0, (nint)cell);
            T count = counter + T.One;
            if (T.IsZero(count))
            {
                break;
            }

            counter = count;
        }

        return i;
    }
}
