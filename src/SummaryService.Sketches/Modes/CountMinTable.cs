using System.Runtime.CompilerServices;

namespace SummaryService.Sketches.Modes;

/// <summary>
/// Count-min table (Cormode &amp; Muthukrishnan, "An improved data stream summary: the count-min
/// sketch and its applications", J. Algorithms 2005) with conservative update: a key's counters
/// are raised only as far as its new estimate, which keeps every estimate an over-count while
/// shrinking the over-count.
/// </summary>
/// <remarks>
/// With width w = ⌈e/ε⌉ and depth d = ⌈ln(1/δ)⌉ an estimate exceeds the true count by more than
/// εN with probability at most δ. Which counters a key owns is <see cref="CountMinHashing"/>'s one
/// definition; how they are raised is <see cref="Raise"/>'s, for one key and for a batch alike.
/// </remarks>
internal sealed class CountMinTable
{
    private readonly long[] _counters;

    public CountMinTable(int width, int depth)
        : this(width, depth, new long[checked(width * depth)])
    {
    }

    public CountMinTable(int width, int depth, long[] counters)
    {
        Width = width;
        Depth = depth;
        _counters = counters;
    }

    public int Width { get; }

    public int Depth { get; }

    /// <summary>ε of the guarantee for this width: e / w.</summary>
    public double Epsilon => Math.E / Width;

    /// <summary>δ of the guarantee for this depth: e^−d.</summary>
    public double FailureProbability => Math.Exp(-Depth);

    public ReadOnlySpan<long> Counters => _counters;

    /// <summary>Adds <paramref name="count"/> occurrences of a key and returns its new estimate.</summary>
    public long Add(long key, long count)
    {
        Span<int> cells = stackalloc int[Depth];
        CountMinHashing.Cells(ModeKey.Hash(key), Width, cells);
        return Raise(_counters, cells, 0, 1, count);
    }

    public long Estimate(long key)
    {
        Span<int> cells = stackalloc int[Depth];
        CountMinHashing.Cells(ModeKey.Hash(key), Width, cells);
        return Lowest(_counters, cells, 0, 1);
    }

    /// <summary>
    /// The cells of a batch of keys, row by row: <paramref name="cells"/>[row · n + i] is key i's cell
    /// in that row, exactly as <see cref="CountMinHashing.Cells"/> gives it. Hashed up front, the
    /// mixes are independent per key, so they pipeline (eight keys at a time in vector registers
    /// where the processor has AVX2) instead of sitting on the chain of table updates.
    /// </summary>
    /// <param name="keys">The batch's keys, n of them.</param>
    /// <param name="cells">Receives n · <see cref="Depth"/> cell indices.</param>
    public void FillCells(ReadOnlySpan<long> keys, Span<int> cells) => FillCells(keys, cells, vectorized: true);

    /// <summary>As <see cref="FillCells(ReadOnlySpan{long}, Span{int})"/>, choosing the path, so tests can hold each to the reference.</summary>
    internal void FillCells(ReadOnlySpan<long> keys, Span<int> cells, bool vectorized)
    {
        int n = keys.Length;
        int done = vectorized ? VectorCells.Fill(keys, cells, Width, Depth) : 0;
        Span<int> one = stackalloc int[Depth];
        for (int i = done; i < n; i++)
        {
            CountMinHashing.Cells(ModeKey.Hash(keys[i]), Width, one);
            for (int row = 0; row < one.Length; row++)
            {
                cells[(row * n) + i] = one[row];
            }
        }
    }

    /// <summary>
    /// Adds one occurrence of each key of a batch whose cells <see cref="FillCells(ReadOnlySpan{long}, Span{int})"/>
    /// gave, from key <paramref name="from"/> on, exactly as <see cref="Add"/> would one by one, and
    /// stops after the first key whose new estimate exceeds <paramref name="threshold"/>.
    /// </summary>
    /// <returns>That key's index, with its estimate; or n when no key got past the threshold.</returns>
    /// <remarks>
    /// A leaf with no calls (<see cref="Raise"/> is inlined), so its loop keeps every index in a
    /// register; with the candidate check in the same loop, the call it sometimes makes forced the
    /// loop's state onto the stack, and every counter write reloaded it.
    /// </remarks>
    public int AddUntilAbove(ReadOnlySpan<int> cells, int from, int n, long threshold, out long estimate)
    {
        long[] counters = _counters;
        for (int i = from; i < n; i++)
        {
            long raised = Raise(counters, cells, i, n, 1);
            if (raised > threshold)
            {
                estimate = raised;
                return i;
            }
        }

        estimate = 0;
        return n;
    }

    /// <summary>Adds another table of the same shape cell by cell; estimates stay over-counts of the combined stream.</summary>
    public void AddTable(CountMinTable other)
    {
        ReadOnlySpan<long> theirs = other._counters;
        for (int i = 0; i < _counters.Length; i++)
        {
            _counters[i] += theirs[i];
        }
    }

    /// <summary>
    /// The update rule, conservative update: a key's estimate is its lowest counter; adding
    /// <paramref name="count"/> raises each of its counters to at most that estimate plus the count
    /// (never lowering one), which keeps every estimate an over-count while shrinking the over-count.
    /// The key's counters are <paramref name="cells"/>[first], [first + stride], … to the span's end.
    /// </summary>
    /// <returns>The key's new estimate.</returns>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static long Raise(long[] counters, ReadOnlySpan<int> cells, int first, int stride, long count)
    {
        long raised = Lowest(counters, cells, first, stride) + count;
        for (int at = first; at < cells.Length; at += stride)
        {
            int cell = cells[at];
            counters[cell] = MaxOf(counters[cell], raised);
        }

        return raised;
    }

    /// <summary>A key's estimate: the lowest of its counters, laid out as for <see cref="Raise"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static long Lowest(long[] counters, ReadOnlySpan<int> cells, int first, int stride)
    {
        long lowest = counters[cells[first]];
        for (int at = first + stride; at < cells.Length; at += stride)
        {
            lowest = MinOf(lowest, counters[cells[at]]);
        }

        return lowest;
    }

    // Min and max by arithmetic: which cell is lowest is a coin toss on every update, and the JIT
    // turns Math.Min/Max on longs into branches that mispredict about half the time. Exact for
    // counters, which are never negative, so a − b cannot overflow.
    private static long MinOf(long a, long b)
    {
        long d = a - b;
        return b + (d & (d >> 63));
    }

    private static long MaxOf(long a, long b)
    {
        long d = a - b;
        return a - (d & (d >> 63));
    }

    public CountMinTable Clone() => new(Width, Depth, (long[])_counters.Clone());
}
