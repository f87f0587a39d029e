using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>The level-0 sort and the level merge agree with a plain comparison sort on every length and shape of input.</summary>
public class RunSortTests
{
    [Fact]
    public void Every_length_up_to_and_past_the_stack_buffers_sorts_like_Array_Sort()
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
    // input if and only if it sorts every input of zeros and ones. A block of 4m keys is m rows of
    // four columns, each column sorted by the network, so giving each column its own 0/1 pattern
    // checks the networks for 2, 4 and 8 keys on all 2^m patterns.
    [Theory]
    [InlineData(8)]
    [InlineData(16)]
    [InlineData(32)]
    public void Column_networks_sort_every_zero_one_input(int block)
    {
        int rows = block / 4;
        for (int pattern = 0; pattern < 1 << rows; pattern++)
        {
            var values = new double[block];
            for (int row = 0; row < rows; row++)
            {
                for (int column = 0; column < 4; column++)
                {
                    // Column c sees the pattern rotated by c, so the columns differ.
                    int turn = column % rows;
                    int bits = ((pattern << turn) | (pattern >> (rows - turn))) & ((1 << rows) - 1);
                    values[(row * 4) + column] = (bits >> row) & 1;
                }
            }

            AssertSortsLikeReference(values);
        }
    }

    [Fact]
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
