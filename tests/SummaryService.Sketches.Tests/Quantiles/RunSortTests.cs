using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>The level-0 sort and the level merge agree with a plain comparison sort on every length and shape of input.</summary>
public class RunSortTests
{
    [Fact]
    public void Every_length_up_to_and_past_the_kept_scratch_sorts_like_Array_Sort()
    {
        var rng = new Random(71);
        for (int n = 0; n <= 1100; n++)
        {
            foreach (double[] values in Shapes(n, rng))
            {
                AssertSortsLikeReference(values);
            }
        }
    }

    [Fact]
    public void Minus_zero_sorts_just_below_plus_zero_and_keeps_its_sign()
    {
        double[] values = [0.0, -0.0, 1.0, -0.0, 0.0, -1.0, double.Epsilon, -double.Epsilon];
        values = SortedByKeys(values);
        double[] expected = [-1.0, -double.Epsilon, -0.0, -0.0, 0.0, 0.0, double.Epsilon, 1.0];
        Assert.Equal(expected.Select(BitConverter.DoubleToInt64Bits), values.Select(BitConverter.DoubleToInt64Bits));
    }

    // The 0-1 principle (Knuth, TAOCP vol. 3, 5.3.4, Theorem Z): a comparator network sorts every
    // input if and only if it sorts every input of zeros and ones. The register block is checked in
    // its two stages. First the column network: a block is eight rows of four columns, and giving
    // each column its own rotation of one 0/1 pattern checks it on all 2^8 patterns.
    [Avx2Fact]
    public void Column_network_sorts_every_zero_one_input()
    {
        for (int pattern = 0; pattern < 1 << 8; pattern++)
        {
            var block = new long[RunSort.Block];
            for (int row = 0; row < 8; row++)
            {
                for (int column = 0; column < 4; column++)
                {
                    int bits = ((pattern << column) | (pattern >> (8 - column))) & 0xFF;
                    block[(row * 4) + column] = (bits >> row) & 1;
                }
            }

            RunSort.SortColumns(block);
            for (int column = 0; column < 4; column++)
            {
                long[] values = Enumerable.Range(0, 8).Select(row => block[(row * 4) + column]).ToArray();
                Assert.Equal(values.Order(), values);
            }
        }
    }

    // Then the transposes and merges, which only ever see sorted columns: a sorted 0/1 column is
    // fixed by its number of ones, so the 9^4 choices of four counts are every input they can get.
    // With the column check above this covers all 2^32 zero-one inputs of the block.
    [Avx2Fact]
    public void Merge_stages_sort_every_zero_one_block_with_sorted_columns()
    {
        for (int counts = 0; counts < 9 * 9 * 9 * 9; counts++)
        {
            var block = new long[RunSort.Block];
            int rest = counts;
            for (int column = 0; column < 4; column++, rest /= 9)
            {
                int ones = rest % 9;
                for (int row = 8 - ones; row < 8; row++)
                {
                    block[(row * 4) + column] = 1;
                }
            }

            long total = block.Sum();
            RunSort.SortBlock(block);
            Assert.Equal(Enumerable.Repeat(0L, RunSort.Block - (int)total).Concat(Enumerable.Repeat(1L, (int)total)), block);
        }
    }

    [Avx2Fact]
    public void Vector_and_portable_paths_give_the_same_bits()
    {
        var rng = new Random(72);
        for (int n = 0; n <= 600; n += 7)
        {
            foreach (double[] values in Shapes(n, rng))
            {
                long[] vector = OrderKeys.Of(values);
                long[] portable = OrderKeys.Of(values);
                RunSort.Sort(vector, vectorized: true);
                RunSort.Sort(portable, vectorized: false);
                Assert.Equal(portable, vector);
            }
        }
    }

    private static void AssertSortsLikeReference(double[] values)
    {
        // Reference: Array.Sort's comparison order, with −0 and +0 (equal to it) told apart by sign.
        double[] expected = (double[])values.Clone();
        Array.Sort(expected, static (a, b) => a != b ? a.CompareTo(b) : double.IsNegative(b).CompareTo(double.IsNegative(a)));
        Assert.Equal(expected.Select(BitConverter.DoubleToInt64Bits), SortedByKeys(values).Select(BitConverter.DoubleToInt64Bits));
    }

    [Fact]
    public void Merging_two_sorted_runs_gives_what_sorting_both_together_gives()
    {
        var rng = new Random(73);
        for (int n = 0; n <= 300; n += 3)
        {
            foreach (double[] values in Shapes(n, rng))
            {
                int split = n == 0 ? 0 : rng.Next(n + 1);
                long[] x = OrderKeys.Of(values.AsSpan(0, split));
                long[] y = OrderKeys.Of(values.AsSpan(split));
                Array.Sort(x);
                Array.Sort(y);
                // Reference: Array.Sort of both runs together.
                long[] expected = x.Concat(y).ToArray();
                Array.Sort(expected);
                var output = new long[n];
                RunSort.Merge(x, y, output);
                Assert.Equal(expected, output);
            }
        }
    }

    [Fact]
    public void A_merge_may_write_over_the_run_it_reads()
    {
        // A KLL level merges what a compaction promotes into its own buffer.
        long[] buffer = [1, 4, 9, 16, 0, 0, 0];
        long[] incoming = [2, 9, 20];
        RunSort.Merge(buffer.AsSpan(0, 4), incoming, buffer);
        Assert.Equal([1, 2, 4, 9, 9, 16, 20], buffer);
    }

    private static double[] SortedByKeys(double[] values)
    {
        long[] keys = OrderKeys.Of(values);
        RunSort.Sort(keys);
        return OrderKeys.ToValues(keys);
    }

    private static IEnumerable<double[]> Shapes(int n, Random rng)
    {
        yield return Enumerable.Range(0, n).Select(_ => Math.Exp(3 + rng.NextDouble())).ToArray();
        yield return Enumerable.Range(0, n).Select(_ => (double)rng.Next(3) - 1).ToArray();
        yield return Enumerable.Range(0, n).Select(_ => (rng.NextDouble() - 0.5) * double.MaxValue).ToArray();
        yield return Enumerable.Range(0, n).Select(i => i % 3 == 0 ? -0.0 : i % 3 == 1 ? 0.0 : -i).ToArray();
        yield return Enumerable.Range(0, n).Select(i => (double)(n - i)).ToArray();
        yield return Enumerable.Range(0, n).Select(i => i % 2 == 0 ? double.MaxValue : -double.MaxValue).ToArray();
    }
}
