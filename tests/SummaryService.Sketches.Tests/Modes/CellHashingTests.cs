using SummaryService.Sketches.Modes;

namespace SummaryService.Sketches.Tests.Modes;

/// <summary>
/// A batch's cells are the cells each key would get alone, on the vector path and the scalar one:
/// a table hashed one way must answer the same when updated or restored the other way.
/// </summary>
public class CellHashingTests
{
    [Theory]
    [InlineData(2, 1)]
    [InlineData(136, 5)]
    [InlineData(137, 4)]
    [InlineData(1000, 8)]
    [InlineData(1 << 20, 3)]
    public void Batch_cells_match_single_key_cells_on_both_paths(int width, int depth)
    {
        var rng = new Random(width + depth);
        foreach (int n in new[] { 1, 7, 8, 9, 16, 63, 64 })
        {
            long[] keys = Enumerable.Range(0, n).Select(i => i % 3 == 0 ? rng.NextInt64(long.MinValue, long.MaxValue) : i - 4L).ToArray();
            var table = new CountMinTable(width, depth);
            var vector = new int[n * depth];
            var scalar = new int[n * depth];
            table.FillCells(keys, new ulong[n], vector, vectorized: true);
            table.FillCells(keys, new ulong[n], scalar, vectorized: false);
            Assert.Equal(scalar, vector);

            // One key at a time through Add: each of its rows' counters is raised to its estimate.
            for (int i = 0; i < n; i++)
            {
                var single = new CountMinTable(width, depth);
                single.Add(keys[i], 1);
                int[] raised = Enumerable.Range(0, single.Counters.Length).Where(c => single.Counters[c] != 0).ToArray();
                Assert.Equal(Enumerable.Range(0, depth).Select(row => scalar[(row * n) + i]).Order(), raised);
            }
        }
    }
}
