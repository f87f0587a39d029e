namespace SummaryService.Sketches.Modes;

/// <summary>
/// Which counter of each row of a count-min table a key lands in: the one definition of the
/// hashing. <see cref="Cells"/> is the plain form and the reference; the batched and vector paths
/// of <see cref="CountMinTable"/> are faster ways to the same cells and are tested against it bit
/// for bit, because a table filled one way is read, merged and restored another.
/// </summary>
/// <remarks>
/// <para>The key's hash h is <see cref="ModeKey.Hash"/>. Rows take 32 bits each from a sequence of
/// 64-bit words: word 0 is h itself, word j ≥ 1 is <see cref="SplitMix64.Mix"/>(h + j·γ) with γ the
/// SplitMix64 increment, that is the j-th output of a SplitMix64 generator started at h. Row r takes
/// the low half of word r/2 when r is even and the high half when r is odd.</para>
/// <para>The 32 bits b become a column by multiply-shift, (b · width) &gt;&gt; 32, an unbiased-enough
/// map onto [0, width) without a division (Lemire, "Fast random integer generation in an interval",
/// ACM TOMACS 2019). Row r's counters start at r · width in the table.</para>
/// <para>The guarantee of the table needs the rows to hash independently, which is why each row has
/// its own bits. Double hashing h1 + i·h2 is not used: with multiply-shift it only looks at the top
/// bits of h1 and h2, so two keys that collide in two rows would collide in all of them.</para>
/// </remarks>
internal static class CountMinHashing
{
    /// <summary>Word <paramref name="pair"/> of a key's sequence, which rows 2·pair and 2·pair + 1 take their bits from.</summary>
    public static ulong Word(ulong hash, int pair) => pair == 0 ? hash : SplitMix64.Mix(hash + ((ulong)pair * SplitMix64.Gamma));

    /// <summary>The column 32 bits pick in a row <paramref name="width"/> counters wide.</summary>
    public static int Column(uint bits, int width) => (int)(((ulong)bits * (ulong)width) >> 32);

    /// <summary>
    /// The reference: the cell (index into the row-by-row table) of the key with hash
    /// <paramref name="hash"/> in each row 0 … <c>cells.Length</c> − 1 of a table
    /// <paramref name="width"/> counters wide.
    /// </summary>
    public static void Cells(ulong hash, int width, Span<int> cells)
    {
        for (int row = 0; row < cells.Length; row += 2)
        {
            ulong word = Word(hash, row >> 1);
            cells[row] = (row * width) + Column((uint)word, width);
            if (row + 1 < cells.Length)
            {
                cells[row + 1] = ((row + 1) * width) + Column((uint)(word >> 32), width);
            }
        }
    }
}
