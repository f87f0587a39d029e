using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace SummaryService.Sketches.Modes;

/// <summary>
/// The count-min cells of eight keys at a time in 256-bit registers: a fast form of
/// <see cref="CountMinHashing.Cells"/> (the same hash, words and multiply-shift maps, with its
/// constants), tested against it bit for bit.
/// </summary>
/// <remarks>
/// Hashing was about a quarter of a mode update. AVX2 has no 64-bit multiply, so each one is put
/// together from three 32 × 32 → 64-bit multiplies (the low word of a product needs no more).
/// </remarks>
internal static class VectorCells
{
    /// <summary>
    /// Fills <paramref name="cells"/>[row · n + i] for the leading multiple of eight of the n keys and
    /// returns how many keys that is (0 without AVX2); the caller does the rest.
    /// </summary>
    public static int Fill(ReadOnlySpan<long> keys, Span<int> cells, int width, int depth)
    {
        int n = keys.Length;
        int done = Avx2.IsSupported ? n & ~7 : 0;
        var widths = Vector256.Create((uint)width);
        for (int i = 0; i < done; i += 8)
        {
            Vector256<ulong> lowHash = HashOf(Vector256.Create(keys.Slice(i, 4)).AsUInt64());
            Vector256<ulong> highHash = HashOf(Vector256.Create(keys.Slice(i + 4, 4)).AsUInt64());
            for (int row = 0; row < depth; row += 2)
            {
                var step = Vector256.Create((ulong)(row >> 1) * SplitMix64.Gamma);
                Vector256<ulong> lowWord = row == 0 ? lowHash : Mix(lowHash + step);
                Vector256<ulong> highWord = row == 0 ? highHash : Mix(highHash + step);
                Store(cells, (row * n) + i, row * width, lowWord, highWord, widths);
                if (row + 1 < depth)
                {
                    Store(cells, ((row + 1) * n) + i, (row + 1) * width, lowWord >>> 32, highWord >>> 32, widths);
                }
            }
        }

        return done;
    }

    // Row cell = base + (32 bits × width) >> 32, from the low 32 bits of each lane.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Store(Span<int> cells, int at, int rowBase, Vector256<ulong> low, Vector256<ulong> high, Vector256<uint> widths)
    {
        Vector256<ulong> lowCells = Avx2.Multiply(low.AsUInt32(), widths) >>> 32;
        Vector256<ulong> highCells = Avx2.Multiply(high.AsUInt32(), widths) >>> 32;
        Vector256<uint> packed = Vector256.Narrow(lowCells, highCells) + Vector256.Create((uint)rowBase);
        packed.AsInt32().CopyTo(cells.Slice(at, 8));
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<ulong> HashOf(Vector256<ulong> keys) => Mix(keys ^ Vector256.Create(ModeKey.HashSalt));

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<ulong> Mix(Vector256<ulong> z)
    {
        z = Multiply(z ^ (z >>> 30), SplitMix64.FirstMultiplier);
        z = Multiply(z ^ (z >>> 27), SplitMix64.SecondMultiplier);
        return z ^ (z >>> 31);
    }

    // The low 64 bits of z · c: lo(z)·lo(c) + ((hi(z)·lo(c) + lo(z)·hi(c)) << 32).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<ulong> Multiply(Vector256<ulong> z, ulong c)
    {
        var low = Vector256.Create((uint)c);
        var high = Vector256.Create((uint)(c >> 32));
        Vector256<ulong> cross = Avx2.Multiply((z >>> 32).AsUInt32(), low) + Avx2.Multiply(z.AsUInt32(), high);
        return Avx2.Multiply(z.AsUInt32(), low) + (cross << 32);
    }
}
