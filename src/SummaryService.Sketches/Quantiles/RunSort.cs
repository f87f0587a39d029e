using System.Buffers;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace SummaryService.Sketches.Quantiles;

/// <summary>
/// Sorts and merges the runs of order keys (see <see cref="OrderKeys"/>) a KLL sketch sorts and
/// merges: level-0 runs of mostly 8 to 32 keys, and the merges of sorted levels, without
/// data-dependent branches.
/// </summary>
/// <remarks>
/// <para>Every value folded into a KLL sketch passes through exactly one level-0 sort and about
/// two merges, and on random data a comparison sort or merge mispredicts about one branch per
/// comparison, which made them most of the sketch's update cost. Here a block of 32 keys is sorted
/// in eight 256-bit registers: an 8-key network sorts each of the four columns, a transpose turns
/// the columns into runs, and bitonic merges (Batcher, "Sorting networks and their applications",
/// AFIPS 1968) join the runs. Longer runs are 32-key blocks merged bottom-up by merges that select
/// with arithmetic instead of branching, working from both ends of each pair of runs at once so two
/// independent chains overlap.</para>
/// <para>Distinct keys sort one way only, so the result does not depend on the path taken:
/// machines without AVX2 sort with <see cref="MemoryExtensions.Sort{T}(Span{T})"/> and get the same keys.</para>
/// </remarks>
internal static class RunSort
{
    /// <summary>Keys a register block sorts.</summary>
    internal const int Block = 32;

    // Merges read up to one element past either end of a run.
    private const int Slack = 1;

    // Scratch a thread keeps between calls (16 KB per buffer); longer runs rent from the pool.
    private const int KeptScratch = 2048;

    [ThreadStatic]
    private static long[]? t_first;

    [ThreadStatic]
    private static long[]? t_second;

    /// <summary>Sorts keys ascending.</summary>
    public static void Sort(Span<long> keys) => Sort(keys, Avx2.IsSupported);

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

        int padded = (n + Block - 1) & ~(Block - 1);
        int length = padded + (2 * Slack);
        long[] first = Rent(ref t_first, length);
        Span<long> work = first.AsSpan(Slack, padded);
        keys.CopyTo(work);

        // Keys of finite doubles stay below long.MaxValue, so the padding sorts last and is dropped.
        work[n..].Fill(long.MaxValue);
        for (int start = 0; start < padded; start += Block)
        {
            SortBlock(ref work[start]);
        }

        if (padded == Block)
        {
            work[..n].CopyTo(keys);
        }
        else
        {
            long[] second = Rent(ref t_second, length);
            MergeBlocks(work, second.AsSpan(Slack, padded))[..n].CopyTo(keys);
            Return(ref t_second, second);
        }

        Return(ref t_first, first);
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
        Merge(ref buffer[Slack], x.Length, ref buffer[(2 * Slack) + x.Length], y.Length, ref MemoryMarshal.GetReference(output));
        Return(ref t_first, buffer);
    }

    /// <summary>Sorts the first <see cref="Block"/> keys of <paramref name="block"/> in registers.</summary>
    internal static void SortBlock(Span<long> block)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(block.Length, Block);
        SortBlock(ref block[0]);
    }

    /// <summary>The first stage of <see cref="SortBlock(Span{long})"/> alone: sorts each of the four columns (keys i, i + 4, …, i + 28).</summary>
    internal static void SortColumns(Span<long> block)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(block.Length, Block);
        ref long at = ref block[0];
        var v0 = Vector256.LoadUnsafe(ref at, 0);
        var v1 = Vector256.LoadUnsafe(ref at, 4);
        var v2 = Vector256.LoadUnsafe(ref at, 8);
        var v3 = Vector256.LoadUnsafe(ref at, 12);
        var v4 = Vector256.LoadUnsafe(ref at, 16);
        var v5 = Vector256.LoadUnsafe(ref at, 20);
        var v6 = Vector256.LoadUnsafe(ref at, 24);
        var v7 = Vector256.LoadUnsafe(ref at, 28);
        SortColumns(ref v0, ref v1, ref v2, ref v3, ref v4, ref v5, ref v6, ref v7);
        v0.StoreUnsafe(ref at, 0);
        v1.StoreUnsafe(ref at, 4);
        v2.StoreUnsafe(ref at, 8);
        v3.StoreUnsafe(ref at, 12);
        v4.StoreUnsafe(ref at, 16);
        v5.StoreUnsafe(ref at, 20);
        v6.StoreUnsafe(ref at, 24);
        v7.StoreUnsafe(ref at, 28);
    }

    private static void SortBlock(ref long at)
    {
        var v0 = Vector256.LoadUnsafe(ref at, 0);
        var v1 = Vector256.LoadUnsafe(ref at, 4);
        var v2 = Vector256.LoadUnsafe(ref at, 8);
        var v3 = Vector256.LoadUnsafe(ref at, 12);
        var v4 = Vector256.LoadUnsafe(ref at, 16);
        var v5 = Vector256.LoadUnsafe(ref at, 20);
        var v6 = Vector256.LoadUnsafe(ref at, 24);
        var v7 = Vector256.LoadUnsafe(ref at, 28);
        SortColumns(ref v0, ref v1, ref v2, ref v3, ref v4, ref v5, ref v6, ref v7);

        // After the transposes column c is the run (v_c, v_c+4), ascending.
        Transpose(ref v0, ref v1, ref v2, ref v3);
        Transpose(ref v4, ref v5, ref v6, ref v7);
        MergeRunsOf8(ref v0, ref v4, ref v1, ref v5);
        MergeRunsOf8(ref v2, ref v6, ref v3, ref v7);
        MergeRunsOf16(ref v0, ref v4, ref v1, ref v5, ref v2, ref v6, ref v3, ref v7);
        v0.StoreUnsafe(ref at, 0);
        v4.StoreUnsafe(ref at, 4);
        v1.StoreUnsafe(ref at, 8);
        v5.StoreUnsafe(ref at, 12);
        v2.StoreUnsafe(ref at, 16);
        v6.StoreUnsafe(ref at, 20);
        v3.StoreUnsafe(ref at, 24);
        v7.StoreUnsafe(ref at, 28);
    }

    // The optimal 19-comparator network for 8 (Knuth, TAOCP vol. 3, 5.3.4) on each of the four
    // lanes at once: lane c of v0..v7 is column c.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void SortColumns(ref Vector256<long> v0, ref Vector256<long> v1, ref Vector256<long> v2, ref Vector256<long> v3, ref Vector256<long> v4, ref Vector256<long> v5, ref Vector256<long> v6, ref Vector256<long> v7)
    {
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
    }

    // Rows r0..r3 become columns: lane j of the new r_i is lane i of the old r_j.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Transpose(ref Vector256<long> r0, ref Vector256<long> r1, ref Vector256<long> r2, ref Vector256<long> r3)
    {
        var t0 = Avx2.UnpackLow(r0, r1);
        var t1 = Avx2.UnpackHigh(r0, r1);
        var t2 = Avx2.UnpackLow(r2, r3);
        var t3 = Avx2.UnpackHigh(r2, r3);
        r0 = Avx2.Permute2x128(t0, t2, 0x20);
        r1 = Avx2.Permute2x128(t1, t3, 0x20);
        r2 = Avx2.Permute2x128(t0, t2, 0x31);
        r3 = Avx2.Permute2x128(t1, t3, 0x31);
    }

    // Ascending runs (a0, a1) and (b0, b1) become the ascending run (a0, a1, b0, b1): a followed by
    // b reversed is bitonic, and half-cleaners at distances 8, 4, 2 and 1 sort it.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void MergeRunsOf8(ref Vector256<long> a0, ref Vector256<long> a1, ref Vector256<long> b0, ref Vector256<long> b1)
    {
        var c0 = Reverse(b1);
        var c1 = Reverse(b0);
        Exchange(ref a0, ref c0);
        Exchange(ref a1, ref c1);
        CleanBitonic8(ref a0, ref a1);
        CleanBitonic8(ref c0, ref c1);
        b0 = c0;
        b1 = c1;
    }

    // As MergeRunsOf8 for runs of 16: (a0..a3) and (b0..b3) become the ascending run a0..a3, b0..b3.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void MergeRunsOf16(ref Vector256<long> a0, ref Vector256<long> a1, ref Vector256<long> a2, ref Vector256<long> a3, ref Vector256<long> b0, ref Vector256<long> b1, ref Vector256<long> b2, ref Vector256<long> b3)
    {
        var c0 = Reverse(b3);
        var c1 = Reverse(b2);
        var c2 = Reverse(b1);
        var c3 = Reverse(b0);
        Exchange(ref a0, ref c0);
        Exchange(ref a1, ref c1);
        Exchange(ref a2, ref c2);
        Exchange(ref a3, ref c3);
        CleanBitonic16(ref a0, ref a1, ref a2, ref a3);
        CleanBitonic16(ref c0, ref c1, ref c2, ref c3);
        b0 = c0;
        b1 = c1;
        b2 = c2;
        b3 = c3;
    }

    // Sorts a bitonic run of 16 held in four vectors: a half-cleaner at distance 8, then each half as a run of 8.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void CleanBitonic16(ref Vector256<long> v0, ref Vector256<long> v1, ref Vector256<long> v2, ref Vector256<long> v3)
    {
        Exchange(ref v0, ref v2);
        Exchange(ref v1, ref v3);
        CleanBitonic8(ref v0, ref v1);
        CleanBitonic8(ref v2, ref v3);
    }

    // Sorts a bitonic run of 8 held in two vectors: half-cleaners at distances 4, 2 and 1.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void CleanBitonic8(ref Vector256<long> v0, ref Vector256<long> v1)
    {
        Exchange(ref v0, ref v1);
        v0 = CleanWithinVector(v0);
        v1 = CleanWithinVector(v1);
    }

    // Sorts a bitonic run of four lanes: half-cleaners at distance 2, then 1. Each lane is compared
    // with its partner; the lower lane of a pair keeps the smaller key, the upper lane the larger.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<long> CleanWithinVector(Vector256<long> v)
    {
        var upperHalf = Vector256.Create(0L, 0L, -1L, -1L);
        var oddLanes = Vector256.Create(0L, -1L, 0L, -1L);
        var partner = Avx2.Permute4x64(v, 0b01_00_11_10);
        v = Vector256.ConditionalSelect(Vector256.GreaterThan(v, partner) ^ upperHalf, partner, v);
        partner = Avx2.Permute4x64(v, 0b10_11_00_01);
        return Vector256.ConditionalSelect(Vector256.GreaterThan(v, partner) ^ oddLanes, partner, v);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<long> Reverse(Vector256<long> v) => Avx2.Permute4x64(v, 0b00_01_10_11);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Exchange(ref Vector256<long> low, ref Vector256<long> high)
    {
        var greater = Vector256.GreaterThan(low, high);
        var min = Vector256.ConditionalSelect(greater, high, low);
        high = Vector256.ConditionalSelect(greater, low, high);
        low = min;
    }

    // Merges sorted blocks bottom-up, back and forth between the two buffers; returns whichever holds the result.
    private static ReadOnlySpan<long> MergeBlocks(Span<long> from, Span<long> to)
    {
        int padded = from.Length;
        for (int run = Block; run < padded; run *= 2)
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

                Merge(ref from[start], middle - start, ref from[middle], end - middle, ref to[start]);
            }

            Span<long> swap = from;
            from = to;
            to = swap;
        }

        return from;
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

    // Merges two sorted runs into a contiguous run, from both ends at once: the front emits the
    // smaller half, the back the larger. Equal keys are equal values, so which run a tie comes from
    // does not matter. A run's front or back may be read one element past its end (the buffers'
    // slack covers it), but such a read is never selected.
    private static void Merge(ref long x, int xLength, ref long y, int yLength, ref long output)
    {
        int total = xLength + yLength;
        int i = 0;
        int j = 0;
        int iBack = xLength - 1;
        int jBack = yLength - 1;
        int back = total - 1;
        for (int front = 0; front < total / 2; front++)
        {
            long p = Unsafe.Add(ref x, i);
            long q = Unsafe.Add(ref y, j);
            int takeY = Bit(i >= xLength) | (Bit(j < yLength) & Bit(q < p));
            Unsafe.Add(ref output, front) = p ^ ((p ^ q) & -(long)takeY);
            j += takeY;
            i += takeY ^ 1;

            long pBack = Unsafe.Add(ref x, iBack);
            long qBack = Unsafe.Add(ref y, jBack);
            int takeYBack = Bit(iBack < 0) | (Bit(jBack >= 0) & Bit(qBack > pBack));
            Unsafe.Add(ref output, back--) = pBack ^ ((pBack ^ qBack) & -(long)takeYBack);
            jBack -= takeYBack;
            iBack -= takeYBack ^ 1;
        }

        if ((total & 1) != 0)
        {
            // One element is left: the front's next pick.
            long p = Unsafe.Add(ref x, i);
            long q = Unsafe.Add(ref y, j);
            int takeY = Bit(i >= xLength) | (Bit(j < yLength) & Bit(q < p));
            Unsafe.Add(ref output, back) = p ^ ((p ^ q) & -(long)takeY);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static int Bit(bool condition) => Unsafe.BitCast<bool, byte>(condition);
}
