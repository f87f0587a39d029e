using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Modes;

/// <summary>
/// <see cref="CountMinHashing.Cells"/> is the one definition of where a key lands; the batched
/// scalar path, the vector path and the one-key update all give its cells. A table hashed one way
/// must answer the same when updated, merged or restored another way.
/// </summary>
public class CellHashingTests
{
    public static TheoryData<int, int> Shapes => new()
    {
        { 2, 1 },
        { 136, 5 },
        { 137, 4 },
        { 1000, 8 },
        { 1 << 20, 3 },
    };

    [Theory]
    [MemberData(nameof(Shapes))]
    public void Batched_scalar_cells_are_the_reference_cells(int width, int depth) =>
        AssertBatchPathGivesReferenceCells(width, depth, vectorized: false);

    [Avx2Theory]
    [MemberData(nameof(Shapes))]
    public void Vector_cells_are_the_reference_cells(int width, int depth) =>
        AssertBatchPathGivesReferenceCells(width, depth, vectorized: true);

    [Theory]
    [MemberData(nameof(Shapes))]
    public void One_key_update_raises_exactly_its_reference_cells(int width, int depth)
    {
        // One batch's keys (small, negative, spread over all bits): a fresh table each, so a key's
        // raised counters are the only ones.
        foreach (long key in Batches(width + depth).ElementAt(3))
        {
            var table = new CountMinTable(width, depth);
            Assert.Equal(1, table.Add(key, 1));
            int[] raised = Enumerable.Range(0, table.Counters.Length).Where(c => table.Counters[c] != 0).ToArray();
            Assert.Equal(ReferenceCells([key], width, depth).Order(), raised);
        }
    }

    [Fact]
    public void Reference_rows_take_the_halves_of_the_SplitMix64_sequence_from_the_key_hash()
    {
        // The definition spelled out for one key and four rows: word 0 is the hash, word 1 the first
        // SplitMix64 output from it (Steele, Lea & Flood 2014: state += γ, then the finalizer);
        // columns by multiply-shift (Lemire 2019).
        const int Width = 1000;
        ulong hash = ModeKey.Hash(42);
        var generator = new SplitMix64(hash);
        ulong word1 = generator.Next();
        int[] expected =
        [
            (int)(((hash & 0xFFFF_FFFFUL) * Width) >> 32),
            Width + (int)(((hash >> 32) * Width) >> 32),
            (2 * Width) + (int)(((word1 & 0xFFFF_FFFFUL) * Width) >> 32),
            (3 * Width) + (int)(((word1 >> 32) * Width) >> 32),
        ];
        var cells = new int[4];
        CountMinHashing.Cells(hash, Width, cells);
        Assert.Equal(expected, cells);
    }

    private static void AssertBatchPathGivesReferenceCells(int width, int depth, bool vectorized)
    {
        foreach (long[] keys in Batches(width + depth))
        {
            var cells = new int[keys.Length * depth];
            new CountMinTable(width, depth).FillCells(keys, cells, vectorized);
            Assert.Equal(ReferenceCells(keys, width, depth), cells);
        }
    }

    /// <summary>The cells row by row, key by key, from the plain reference form.</summary>
    private static int[] ReferenceCells(long[] keys, int width, int depth)
    {
        int n = keys.Length;
        var cells = new int[n * depth];
        var one = new int[depth];
        for (int i = 0; i < n; i++)
        {
            CountMinHashing.Cells(ModeKey.Hash(keys[i]), width, one);
            for (int row = 0; row < depth; row++)
            {
                cells[(row * n) + i] = one[row];
            }
        }

        return cells;
    }

    // Batch lengths around the vector width of eight; keys small, negative and spread over all bits.
    private static IEnumerable<long[]> Batches(int seed)
    {
        var rng = new Random(seed);
        foreach (int n in new[] { 1, 7, 8, 9, 16, 63, 64 })
        {
            yield return Enumerable.Range(0, n).Select(i => i % 3 == 0 ? rng.NextInt64(long.MinValue, long.MaxValue) : i - 4L).ToArray();
        }
    }
}
