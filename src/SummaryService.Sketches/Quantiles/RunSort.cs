using System.Buffers;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace SummaryService.Sketches.Quantiles;

/// <summary>
/// Sorts and merges the runs of order keys (see <see cref="OrderKeys"/>) a KLL sketch sorts and
/// merges: level-0 runs of mostly 8 to a few hundred keys, and the merges of sorted levels, without
/// data-dependent branches.
/// </summary>
/// <remarks>
/// <para>Every value folded into a KLL sketch passes through exactly one level-0 sort and about
/// two merges, and on random data a comparison sort or merge mispredicts about one branch per
/// comparison, which made them most of the sketch's update cost. Here blocks of 8, 16 or 32 keys
/// are sorted column-wise by a sorting network of vector compares and blends, and runs are merged
/// by merges that select with arithmetic instead of branching, working from both ends of each pair
/// of runs at once so two independent chains overlap.</para>
/// <para>Distinct keys sort one way only, so the result does not depend on the path taken:
/// machines without 256-bit vectors sort with <see cref="MemoryExtensions.Sort{T}(Span{T})"/> and
/// get the same keys.</para>
/// </remarks>
internal static class RunSort
{
    // Merges read up to one element (one column stride, 4 keys) past either end of a run.
    private const int Slack = 4;

    // Scratch a thread keeps between calls (16 KB per buffer); longer runs rent from the pool.
    private const int KeptScratch = 2048;

    [ThreadStatic]
    private static long[]? t_first;

    [ThreadStatic]
    private static long[]? t_second;

    /// <summary>Sorts keys ascending.</summary>
    public static void Sort(Span<long> keys) => Sort(keys, Vector256.IsHardwareAccelerated);

    /// <summary>As <see cref="Sort(Span{long})"/>, choosing the path, so tests can show both give the same keys.</summary>
    internal static void Sort(Span<long> keys, bool vectorized)
    {
        int n = keys.Length;
        if (n < 2)
        {
            return;
        }

        if (!vectorized)
        {
            keys.Sort();
            return;
        }

        int block = n <= 8 ? 8 : n <= 16 ? 16 : 32;
        int padded = (n + block - 1) & ~(block - 1);
        int length = padded + (2 * Slack);
        long[] first = Rent(ref t_first, length);
        long[] second = Rent(ref t_second, length);
        Span<long> work = first.AsSpan(Slack, padded);
        keys.CopyTo(work);

        // Keys of finite doubles stay below long.MaxValue, so the padding sorts last and is dropped.
        work[n..].Fill(long.MaxValue);
        SortKeys(work, second.AsSpan(Slack, padded), block)[..n].CopyTo(keys);
        Return(ref t_first, first);
        Return(ref t_second, second);
    }

    /// <summary>
    /// Merges two ascending runs into <paramref name="output"/>, which must be exactly as long as
    /// both together and may overlap either run (the runs are read from a copy).
    /// </summary>
    public static void Merge(ReadOnlySpan<long> x, ReadOnlySpan<long> y, Span<long> output)
    {
        if (x.IsEmpty || y.IsEmpty)
        {
            (x.IsEmpty ? y : x).CopyTo(output);
            return;
        }

        long[] buffer = Rent(ref t_first, x.Length + y.Length + (3 * Slack));
        x.CopyTo(buffer.AsSpan(Slack));
        y.CopyTo(buffer.AsSpan((2 * Slack) + x.Length));
        Merge(ref buffer[Slack], x.Length, ref buffer[(2 * Slack) + x.Length], y.Length, 0, ref MemoryMarshal.GetReference(output));
        Return(ref t_first, buffer);
    }

    // The thread's kept buffer if it is long enough (taken out, so a nested use cannot share it), else a pooled one.
    private static long[] Rent(ref long[]? kept, int length)
    {
        long[]? buffer = kept;
        if (buffer is not null && buffer.Length >= length)
        {
            kept = null;
            return buffer;
        }

        return length <= KeptScratch ? new long[Math.Max(length, 256)] : ArrayPool<long>.Shared.Rent(length);
    }

    private static void Return(ref long[]? kept, long[] buffer)
    {
        if (buffer.Length <= KeptScratch)
        {
            kept = buffer;
        }
        else
        {
            ArrayPool<long>.Shared.Return(buffer);
        }
    }

    // Returns whichever of the two buffers ends up holding the sorted keys.
    private static ReadOnlySpan<long> SortKeys(Span<long> keys, Span<long> scratch, int block)
    {
        int padded = keys.Length;
        int column = block / 4;
        for (int start = 0; start < padded; start += block)
        {
            ref long at = ref keys[start];
            switch (block)
            {
                case 8:
                    SortColumnsOf8(ref at);
                    break;
                case 16:
                    SortColumnsOf16(ref at);
                    break;
                default:
                    SortColumnsOf32(ref at);
                    break;
            }

            // Columns are 4 keys apart (shift 2); each pair of columns becomes one run.
            Merge(ref at, column, ref Unsafe.Add(ref at, 1), column, 2, ref scratch[start]);
            Merge(ref Unsafe.Add(ref at, 2), column, ref Unsafe.Add(ref at, 3), column, 2, ref scratch[start + (2 * column)]);
        }

        Span<long> from = scratch;
        Span<long> to = keys;
        for (int run = 2 * column; run < padded; run *= 2)
        {
            for (int start = 0; start < padded; start += 2 * run)
            {
                int middle = Math.Min(start + run, padded);
                int end = Math.Min(start + (2 * run), padded);
                if (middle == end)
                {
                    from[start..end].CopyTo(to[start..]);
                    continue;
                }

                Merge(ref from[start], middle - start, ref from[middle], end - middle, 0, ref to[start]);
            }

            Span<long> swap = from;
            from = to;
            to = swap;
        }

        return from;
    }

    // Two vectors of four keys: one exchange sorts each column of two.
    private static void SortColumnsOf8(ref long at)
    {
        var v0 = Vector256.LoadUnsafe(ref at, 0);
        var v1 = Vector256.LoadUnsafe(ref at, 4);
        Exchange(ref v0, ref v1);
        v0.StoreUnsafe(ref at, 0);
        v1.StoreUnsafe(ref at, 4);
    }

    // Four vectors of four keys; the optimal 5-comparator network for 4 (Knuth, TAOCP vol. 3,
    // 5.3.4) sorts each of the four columns.
    private static void SortColumnsOf16(ref long at)
    {
        var v0 = Vector256.LoadUnsafe(ref at, 0);
        var v1 = Vector256.LoadUnsafe(ref at, 4);
        var v2 = Vector256.LoadUnsafe(ref at, 8);
        var v3 = Vector256.LoadUnsafe(ref at, 12);
        Exchange(ref v0, ref v1);
        Exchange(ref v2, ref v3);
        Exchange(ref v0, ref v2);
        Exchange(ref v1, ref v3);
        Exchange(ref v1, ref v2);
        v0.StoreUnsafe(ref at, 0);
        v1.StoreUnsafe(ref at, 4);
        v2.StoreUnsafe(ref at, 8);
        v3.StoreUnsafe(ref at, 12);
    }

    // Eight vectors of four keys; the optimal 19-comparator network for 8 (Knuth, TAOCP vol. 3,
    // 5.3.4) sorts each of the four columns. Checked against every 0/1 input by the tests.
    private static void SortColumnsOf32(ref long at)
    {
        var v0 = Vector256.LoadUnsafe(ref at, 0);
        var v1 = Vector256.LoadUnsafe(ref at, 4);
        var v2 = Vector256.LoadUnsafe(ref at, 8);
        var v3 = Vector256.LoadUnsafe(ref at, 12);
        var v4 = Vector256.LoadUnsafe(ref at, 16);
        var v5 = Vector256.LoadUnsafe(ref at, 20);
        var v6 = Vector256.LoadUnsafe(ref at, 24);
        var v7 = Vector256.LoadUnsafe(ref at, 28);
        Exchange(ref v0, ref v2);
        Exchange(ref v1, ref v3);
        Exchange(ref v4, ref v6);
        Exchange(ref v5, ref v7);
        Exchange(ref v0, ref v4);
        Exchange(ref v1, ref v5);
        Exchange(ref v2, ref v6);
        Exchange(ref v3, ref v7);
        Exchange(ref v0, ref v1);
        Exchange(ref v2, ref v3);
        Exchange(ref v4, ref v5);
        Exchange(ref v6, ref v7);
        Exchange(ref v2, ref v4);
        Exchange(ref v3, ref v5);
        Exchange(ref v1, ref v4);
        Exchange(ref v3, ref v6);
        Exchange(ref v1, ref v2);
        Exchange(ref v3, ref v4);
        Exchange(ref v5, ref v6);
        v0.StoreUnsafe(ref at, 0);
        v1.StoreUnsafe(ref at, 4);
        v2.StoreUnsafe(ref at, 8);
        v3.StoreUnsafe(ref at, 12);
        v4.StoreUnsafe(ref at, 16);
        v5.StoreUnsafe(ref at, 20);
        v6.StoreUnsafe(ref at, 24);
        v7.StoreUnsafe(ref at, 28);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Exchange(ref Vector256<long> low, ref Vector256<long> high)
    {
        var greater = Vector256.GreaterThan(low, high);
        var min = Vector256.ConditionalSelect(greater, high, low);
        high = Vector256.ConditionalSelect(greater, low, high);
        low = min;
    }

    // Merges two sorted runs whose elements lie 1 << shift apart into a contiguous run, from both
    // ends at once: the front emits the smaller half, the back the larger. Equal keys are equal
    // values, so which run a tie comes from does not matter. A run's front or back may be read one
    // element past its end (the buffers' slack covers it), but such a read is never selected.
    private static void Merge(ref long x, int xLength, ref long y, int yLength, int shift, ref long output)
    {
        int total = xLength + yLength;
        int i = 0;
        int j = 0;
        int iBack = xLength - 1;
        int jBack = yLength - 1;
        int back = total - 1;
        for (int front = 0; front < total / 2; front++)
        {
            long p = Unsafe.Add(ref x, i << shift);
            long q = Unsafe.Add(ref y, j << shift);
            int takeY = Bit(i >= xLength) | (Bit(j < yLength) & Bit(q < p));
            Unsafe.Add(ref output, front) = p ^ ((p ^ q) & -(long)takeY);
            j += takeY;
            i += takeY ^ 1;

            long pBack = Unsafe.Add(ref x, iBack << shift);
            long qBack = Unsafe.Add(ref y, jBack << shift);
            int takeYBack = Bit(iBack < 0) | (Bit(jBack >= 0) & Bit(qBack > pBack));
            Unsafe.Add(ref output, back--) = pBack ^ ((pBack ^ qBack) & -(long)takeYBack);
            jBack -= takeYBack;
            iBack -= takeYBack ^ 1;
        }

        if ((total & 1) != 0)
        {
            // One element is left: the front's next pick.
            long p = Unsafe.Add(ref x, i << shift);
            long q = Unsafe.Add(ref y, j << shift);
            int takeY = Bit(i >= xLength) | (Bit(j < yLength) & Bit(q < p));
            Unsafe.Add(ref output, back) = p ^ ((p ^ q) & -(long)takeY);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static int Bit(bool condition) => Unsafe.BitCast<bool, byte>(condition);
}
