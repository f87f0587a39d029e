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
        long estimate = long.MaxValue;
        foreach (int cell in cells)
        {
            estimate = Math.Min(estimate, _counters[cell]);
        }

        long raised = estimate + count;
        foreach (int cell in cells)
        {
            // Branch-free raise: the comparison is unpredictable, the max is not.
            _counters[cell] = Math.Max(_counters[cell], raised);
        }

        return raised;
    }

    public long Estimate(long key)
    {
        Span<int> cells = stackalloc int[Depth];
        FillCells(ModeKey.Hash(key), cells);
        long estimate = long.MaxValue;
        foreach (int cell in cells)
        {
            estimate = Math.Min(estimate, _counters[cell]);
        }

        return estimate;
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
