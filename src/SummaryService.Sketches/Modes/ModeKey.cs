using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace SummaryService.Sketches.Modes;

/// <summary>
/// Turns a value into the key it is counted under: the bits of its representative value, which
/// is the value itself (resolution 0) or the centre of its bin of width <c>resolution</c>.
/// </summary>
/// <remarks>Keying by the representative's own bits lets a key be read back as a value without
/// any side table, and gives −0 and +0 one key.</remarks>
internal static class ModeKey
{
    public static long Of(double value, double resolution)
    {
        double representative = value;
        if (resolution > 0)
        {
            double bin = Math.Round(value / resolution) * resolution;
            if (double.IsFinite(bin))
            {
                representative = bin;
            }
        }

        return representative == 0 ? 0 : BitConverter.DoubleToInt64Bits(representative);
    }

    /// <summary>The keys of <paramref name="values"/>, as <see cref="Of(double, double)"/> gives them one by one.</summary>
    public static void Of(ReadOnlySpan<double> values, double resolution, Span<long> keys)
    {
        int i = 0;
        if (resolution == 0 && Vector256.IsHardwareAccelerated)
        {
            // Keyed by their own bits, with −0 folded onto +0's key 0.
            ReadOnlySpan<long> bits = MemoryMarshal.Cast<double, long>(values);
            var minusZero = Vector256.Create(long.MinValue);
            for (; i <= bits.Length - Vector256<long>.Count; i += Vector256<long>.Count)
            {
                var v = Vector256.Create(bits.Slice(i, Vector256<long>.Count));
                Vector256.AndNot(v, Vector256.Equals(v, minusZero)).CopyTo(keys.Slice(i, Vector256<long>.Count));
            }
        }

        for (; i < values.Length; i++)
        {
            keys[i] = Of(values[i], resolution);
        }
    }

    public static double ValueOf(long key) => BitConverter.Int64BitsToDouble(key);

    /// <summary>Mixed into a key before it is hashed: the first hexadecimal digits of π's fraction, a
    /// constant chosen for having no structure of its own (common practice).</summary>
    public const ulong HashSalt = 0x243F6A8885A308D3UL;

    /// <summary>The key's 64-bit hash: where it goes in the exact counter's table and, through
    /// <see cref="CountMinHashing"/>, in the count-min rows.</summary>
    public static ulong Hash(long key) => SplitMix64.Mix((ulong)key ^ HashSalt);
}
