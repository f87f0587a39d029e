namespace SummaryService.Sketches.Modes;

/// <summary>
/// Count-min table (Cormode &amp; Muthukrishnan, "An improved data stream summary: the count-min
/// sketch and its applications", J. Algorithms 2005) with conservative update: a key's counters
/// are raised only as far as its new estimate, which keeps every estimate an over-count while
/// shrinking the over-count.
/// </summary>
/// <remarks>
/// With width w = ⌈e/ε⌉ and depth d = ⌈ln(1/δ)⌉ an estimate exceeds the true count by more than
/// εN with probability at most δ. The guarantee needs the rows to hash independently, so each row
/// takes its own 32 bits of mixed hash output (two rows per 64-bit word), mapped onto the width by
/// multiply-shift. Double hashing h1 + i·h2 is not used: with multiply-shift it only looks at the
/// top bits of h1 and h2, so two keys that collide in two rows would collide in all of them.
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
        FillCells(ModeKey.Hash(key), cells);
        long[] counters = _counters;
        long estimate = counters[cells[0]];
        foreach (int cell in cells)
        {
            estimate = MinOf(estimate, counters[cell]);
        }

        long raised = estimate + count;
        foreach (int cell in cells)
        {
            counters[cell] = MaxOf(counters[cell], raised);
        }

        return raised;
    }

    public long Estimate(long key)
    {
        Span<int> cells = stackalloc int[Depth];
        FillCells(ModeKey.Hash(key), cells);
        long estimate = _counters[cells[0]];
        foreach (int cell in cells)
        {
            estimate = MinOf(estimate, _counters[cell]);
        }

        return estimate;
    }

    /// <summary>
    /// Hashes a batch of keys up front, row by row: <paramref name="cells"/>[row · n + i] is key i's
    /// cell in that row, exactly as <see cref="Add"/> picks it. The mixes are independent per key, so
    /// done this way they pipeline instead of sitting on the chain of table updates.
    /// </summary>
    /// <param name="keys">The batch's keys, n of them.</param>
    /// <param name="hashes">Scratch of at least n entries.</param>
    /// <param name="cells">Receives n · <see cref="Depth"/> cell indices.</param>
    public void FillCells(ReadOnlySpan<long> keys, Span<ulong> hashes, Span<int> cells) => FillCells(keys, hashes, cells, vectorized: true);

    /// <summary>As <see cref="FillCells(ReadOnlySpan{long}, Span{ulong}, Span{int})"/>, choosing the path, so tests can show both give the same cells.</summary>
    internal void FillCells(ReadOnlySpan<long> keys, Span<ulong> hashes, Span<int> cells, bool vectorized)
    {
        int n = keys.Length;
        int done = vectorized ? VectorCells.Fill(keys, cells, Width, Depth) : 0;
        for (int i = done; i < n; i++)
        {
            hashes[i] = ModeKey.Hash(keys[i]);
        }

        ulong width = (ulong)Width;
        for (int row = 0; row < Depth; row += 2)
        {
            Span<int> low = cells.Slice(row * n, n);
            int lowBase = row * Width;
            ulong step = (ulong)(row >> 1) * 0x9E3779B97F4A7C15UL;
            bool pair = row + 1 < Depth;
            Span<int> high = pair ? cells.Slice((row + 1) * n, n) : default;
            int highBase = lowBase + Width;
            for (int i = done; i < n; i++)
            {
                ulong word = row == 0 ? hashes[i] : SplitMix64.Mix(hashes[i] + step);
                low[i] = lowBase + (int)(((word & 0xFFFF_FFFFUL) * width) >> 32);
                if (pair)
                {
                    high[i] = highBase + (int)(((word >> 32) * width) >> 32);
                }
            }
        }
    }

    /// <summary>
    /// Adds one occurrence of each key of a batch whose cells <see cref="FillCells(ReadOnlySpan{long}, Span{ulong}, Span{int})"/>
    /// gave, from key <paramref name="from"/> on, exactly as <see cref="Add"/> would one by one, and
    /// stops after the first key whose new estimate exceeds <paramref name="threshold"/>.
    /// </summary>
    /// <returns>That key's index, with its estimate; or n when no key got past the threshold.</returns>
    /// <remarks>
    /// A leaf with no calls, so its loop keeps every index in a register; with the candidate check
    /// in the same loop, the call it sometimes makes forced the loop's state onto the stack, and
    /// every counter write reloaded it (about 187 instructions a key against about 156 here).
    /// </remarks>
    public int AddUntilAbove(ReadOnlySpan<int> cells, int from, int n, long threshold, out long estimate)
    {
        long[] counters = _counters;
        int length = cells.Length;
        for (int i = from; i < n; i++)
        {
            long lowest = counters[cells[i]];
            for (int at = i + n; at < length; at += n)
            {
                lowest = MinOf(lowest, counters[cells[at]]);
            }

            long raised = lowest + 1;
            for (int at = i; at < length; at += n)
            {
                int cell = cells[at];
                counters[cell] = MaxOf(counters[cell], raised);
            }

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

    // Row r takes 32 bits of word r/2: the hash itself, then SplitMix64 steps from it, each mixed once.
    private void FillCells(ulong hash, Span<int> cells)
    {
        ulong word = hash;
        for (int row = 0; row < cells.Length; row++)
        {
            if (row > 1 && (row & 1) == 0)
            {
                word = SplitMix64.Mix(hash + ((ulong)(row >> 1) * 0x9E3779B97F4A7C15UL));
            }

            uint bits = (row & 1) == 0 ? (uint)word : (uint)(word >> 32);
            cells[row] = (row * Width) + (int)(((ulong)bits * (ulong)Width) >> 32);
        }
    }
}
