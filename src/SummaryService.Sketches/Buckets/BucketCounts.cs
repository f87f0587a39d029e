using System.Numerics;
using System.Runtime.InteropServices;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// Exact counts of one range (positive or negative magnitudes) of a <see cref="LogBucketSketch"/>:
/// a contiguous array of counters starting at bucket index <see cref="First"/>, grown as values
/// arrive, with counters as narrow as the largest count allows (1, 2, 4 or 8 bytes) so that a
/// bucket of a few hundred values per bucket index costs a byte per index.
/// </summary>
/// <remarks>Cells outside the occupied indices hold 0; the array may extend past them by the growth slack.</remarks>
internal sealed class BucketCounts
{
    private const int MinGrowth = 16;

    private byte[] _cells = [];

    /// <summary>Bucket index of the first cell.</summary>
    public int First { get; private set; }

    /// <summary>Number of cells (counters), occupied or not.</summary>
    public int Length => _cells.Length >> WidthLog2;

    /// <summary>log2 of the counter width in bytes: 0 to 3.</summary>
    public int WidthLog2 { get; private set; }

    /// <summary>Sum of all counts.</summary>
    public long Total { get; private set; }

    /// <summary>The raw cells, for the typed update loop.</summary>
    internal byte[] Cells => _cells;

    /// <summary>Heap bytes: object and cell array.</summary>
    public long EstimatedBytes => 40 + 24 + _cells.Length;

    /// <summary>Count of bucket <paramref name="index"/>.</summary>
    public long this[int index]
    {
        get
        {
            int cell = index - First;
            return (uint)cell < (uint)Length ? Read(cell) : 0;
        }
    }

    /// <summary>Smallest and largest occupied index, or null when every count is 0.</summary>
    public (int Low, int High)? Occupied()
    {
        // A counter is occupied when any of its bytes is; the byte scans are vectorized.
        int firstByte = _cells.AsSpan().IndexOfAnyExcept((byte)0);
        if (firstByte < 0)
        {
            return null;
        }

        int lastByte = _cells.AsSpan().LastIndexOfAnyExcept((byte)0);
        return (First + (firstByte >> WidthLog2), First + (lastByte >> WidthLog2));
    }

    /// <summary>Occupied buckets in ascending index order.</summary>
    public IEnumerable<(int Index, long Count)> Buckets()
    {
        if (Occupied() is not (int low, int high))
        {
            yield break;
        }

        for (int cell = low - First; cell <= high - First; cell++)
        {
            long count = Read(cell);
            if (count != 0)
            {
                yield return (First + cell, count);
            }
        }
    }

    /// <summary>The occupied buckets as two arrays, ascending index: what the readers of a sketch walk.</summary>
    public (int[] Indices, long[] Counts) OccupiedBuckets() => WidthLog2 switch
    {
        0 => OccupiedBuckets<byte>(),
        1 => OccupiedBuckets<ushort>(),
        2 => OccupiedBuckets<uint>(),
        _ => OccupiedBuckets<ulong>(),
    };

    /// <summary>True when <paramref name="index"/> has a cell.</summary>
    public bool Covers(int index) => (uint)(index - First) < (uint)Length;

    /// <summary>
    /// Adds <paramref name="count"/> to bucket <paramref name="index"/>, growing the array (with
    /// slack, at most <paramref name="maxCells"/> cells) and widening counters as needed. The caller
    /// has made sure the occupied span stays within its limit.
    /// </summary>
    public void Add(int index, long count, int maxCells)
    {
        if (!Covers(index))
        {
            Grow(index, maxCells);
        }

        int cell = index - First;
        long sum = Read(cell) + count;
        while (sum > MaxOf(WidthLog2))
        {
            Widen();
        }

        Write(cell, sum);
        Total += count;
    }

    /// <summary>
    /// Adds every count of <paramref name="other"/>, its bucket i going to i &gt;&gt; <paramref name="shift"/>
    /// (a finer scale folded into this one): the cells are grown once to take in the whole range,
    /// and counters widened as sums need. The caller has made sure the span stays within its limit.
    /// </summary>
    public void AddFrom(BucketCounts other, int shift, int maxCells)
    {
        if (other.Occupied() is not (int low, int high))
        {
            return;
        }

        Add(low >> shift, 0, maxCells);
        Add(high >> shift, 0, maxCells);
        while (WidthLog2 < other.WidthLog2)
        {
            Widen();
        }

        // Cell by cell in the counters' own types; a sum past this width's limit widens and goes on.
        int from = low - other.First;
        int to = high - other.First;
        while (from <= to)
        {
            from = AddCells(other, from, to, shift);
            if (from <= to)
            {
                Widen();
            }
        }

        Total += other.Total;
    }

    // Adds other's cells from..to (inclusive) into this one's; returns where a sum overflowed, or to + 1.
    private int AddCells(BucketCounts other, int from, int to, int shift) => WidthLog2 switch
    {
        0 => AddCells<byte>(other, from, to, shift),
        1 => AddCells<ushort>(other, from, to, shift),
        2 => AddCells<uint>(other, from, to, shift),
        _ => AddCells<ulong>(other, from, to, shift),
    };

    private int AddCells<TInto>(BucketCounts other, int from, int to, int shift)
        where TInto : unmanaged, IBinaryInteger<TInto>, IUnsignedNumber<TInto> => other.WidthLog2 switch
        {
            0 => AddCells<TInto, byte>(other, from, to, shift),
            1 => AddCells<TInto, ushort>(other, from, to, shift),
            2 => AddCells<TInto, uint>(other, from, to, shift),
            _ => AddCells<TInto, ulong>(other, from, to, shift),
        };

    private int AddCells<TInto, TFrom>(BucketCounts other, int from, int to, int shift)
        where TInto : unmanaged, IBinaryInteger<TInto>, IUnsignedNumber<TInto>
        where TFrom : unmanaged, IBinaryInteger<TFrom>, IUnsignedNumber<TFrom>
    {
        Span<TInto> into = MemoryMarshal.Cast<byte, TInto>(_cells.AsSpan());
        ReadOnlySpan<TFrom> source = MemoryMarshal.Cast<byte, TFrom>(other._cells.AsSpan());
        ulong limit = (ulong)MaxOf(WidthLog2);
        for (int cell = from; cell <= to; cell++)
        {
            ulong count = ulong.CreateTruncating(source[cell]);
            if (count == 0)
            {
                continue;
            }

            int target = ((other.First + cell) >> shift) - First;
            ulong sum = ulong.CreateTruncating(into[target]) + count;
            if (sum > limit)
            {
                return cell;
            }

            into[target] = TInto.CreateTruncating(sum);
        }

        return to + 1;
    }

    /// <summary>Records <paramref name="count"/> values added by the typed update loop (counts already in the cells).</summary>
    internal void Counted(long count) => Total += count;

    /// <summary>Doubles the counter width.</summary>
    public void Widen()
    {
        int n = Length;
        var wider = new BucketCounts { First = First, WidthLog2 = WidthLog2 + 1, _cells = new byte[n << (WidthLog2 + 1)], Total = Total };
        for (int cell = 0; cell < n; cell++)
        {
            wider.Write(cell, Read(cell));
        }

        _cells = wider._cells;
        WidthLog2++;
    }

    /// <summary>The counts of this range at a scale <paramref name="by"/> steps coarser: bucket i goes to i &gt;&gt; by.</summary>
    public BucketCounts Downscaled(int by)
    {
        var coarser = new BucketCounts();
        if (Occupied() is not (int low, int high))
        {
            return coarser;
        }

        int first = low >> by;
        int length = (high >> by) - first + 1;
        coarser.First = first;
        coarser.WidthLog2 = WidthLog2;
        coarser._cells = new byte[length << WidthLog2];
        foreach ((int index, long count) in Buckets())
        {
            coarser.Add(index >> by, count, int.MaxValue);
        }

        return coarser;
    }

    /// <summary>Gives back cells beyond the occupied indices and narrows counters to the largest count.</summary>
    public void TrimExcess()
    {
        if (Occupied() is not (int low, int high))
        {
            (_cells, First, WidthLog2) = ([], 0, 0);
            return;
        }

        long largest = 0;
        for (int cell = low - First; cell <= high - First; cell++)
        {
            largest = Math.Max(largest, Read(cell));
        }

        int width = 0;
        while (largest > MaxOf(width))
        {
            width++;
        }

        if (low == First && high == First + Length - 1 && width == WidthLog2)
        {
            return;
        }

        var trimmed = new BucketCounts { First = low, WidthLog2 = width, _cells = new byte[(high - low + 1) << width] };
        for (int cell = low - First; cell <= high - First; cell++)
        {
            trimmed.Write(cell - (low - First), Read(cell));
        }

        (_cells, First, WidthLog2) = (trimmed._cells, low, width);
    }

    /// <summary>An independent copy, cells as they are (a closed bucket's are already trimmed).</summary>
    public BucketCounts Clone() =>
        new() { First = First, WidthLog2 = WidthLog2, _cells = _cells.Length == 0 ? [] : (byte[])_cells.Clone(), Total = Total };

    /// <summary>Largest count a counter of 2^<paramref name="widthLog2"/> bytes holds.</summary>
    internal static long MaxOf(int widthLog2) => widthLog2 switch
    {
        0 => byte.MaxValue,
        1 => ushort.MaxValue,
        2 => uint.MaxValue,
        _ => long.MaxValue,
    };

    private long Read(int cell) => WidthLog2 switch
    {
        0 => _cells[cell],
        1 => MemoryMarshal.Cast<byte, ushort>(_cells.AsSpan())[cell],
        2 => MemoryMarshal.Cast<byte, uint>(_cells.AsSpan())[cell],
        _ => MemoryMarshal.Cast<byte, long>(_cells.AsSpan())[cell],
    };

    private void Write(int cell, long value)
    {
        switch (WidthLog2)
        {
            case 0:
                _cells[cell] = (byte)value;
                break;
            case 1:
                MemoryMarshal.Cast<byte, ushort>(_cells.AsSpan())[cell] = (ushort)value;
                break;
            case 2:
                MemoryMarshal.Cast<byte, uint>(_cells.AsSpan())[cell] = (uint)value;
                break;
            default:
                MemoryMarshal.Cast<byte, long>(_cells.AsSpan())[cell] = value;
                break;
        }
    }

    private (int[] Indices, long[] Counts) OccupiedBuckets<T>()
        where T : unmanaged, IBinaryInteger<T>, IUnsignedNumber<T>
    {
        ReadOnlySpan<T> cells = MemoryMarshal.Cast<byte, T>(_cells.AsSpan());
        int occupied = cells.Length - cells.Count(T.Zero);
        int[] indices = GC.AllocateUninitializedArray<int>(occupied);
        long[] counts = GC.AllocateUninitializedArray<long>(occupied);
        int next = 0;
        for (int cell = 0; cell < cells.Length && next < occupied; cell++)
        {
            if (!T.IsZero(cells[cell]))
            {
                indices[next] = First + cell;
                counts[next++] = long.CreateTruncating(cells[cell]);
            }
        }

        return (indices, counts);
    }

    // Re-allocates to take in `index` with slack on the side that grew: a quarter of the span, at
    // least MinGrowth cells, never more than maxCells in all.
    private void Grow(int index, int maxCells)
    {
        int oldLength = Length;
        int low = oldLength == 0 ? index : Math.Min(First, index);
        int high = oldLength == 0 ? index : Math.Max(First + oldLength - 1, index);
        int span = high - low + 1;
        int slack = Math.Max(MinGrowth, span / 4);
        long room = Math.Max(0, (long)maxCells - span);
        slack = (int)Math.Min(slack, room);
        if (oldLength > 0 && index < First)
        {
            low -= slack;
        }
        else
        {
            high += slack;
        }

        var grown = new byte[(high - low + 1) << WidthLog2];
        int shift = (First - low) << WidthLog2;
        if (oldLength > 0)
        {
            Buffer.BlockCopy(_cells, 0, grown, shift, _cells.Length);
        }

        _cells = grown;
        First = low;
    }
}
