using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;

namespace SummaryService.Sketches.Quantiles;

/// <summary>
/// 64-bit keys whose signed order is the order of the finite doubles: the sign-magnitude bits with
/// the magnitude flipped for negatives, so −0 sorts just below +0. A KLL sketch holds its items as
/// these keys, so its sorts and merges compare integers and no value is converted on the way.
/// </summary>
/// <remarks>Distinct finite doubles have distinct keys and the map is its own inverse.</remarks>
internal static class OrderKeys
{
    /// <summary>Key of a finite value.</summary>
    public static long Of(double value) => Flip(BitConverter.DoubleToInt64Bits(value));

    /// <summary>Value of a key.</summary>
    public static double ValueOf(long key) => BitConverter.Int64BitsToDouble(Flip(key));

    /// <summary>
    /// Writes the keys of <paramref name="values"/> into <paramref name="keys"/> and widens
    /// [<paramref name="min"/>, <paramref name="max"/>] to take them in, four at a time where the
    /// machine has 256-bit vectors.
    /// </summary>
    public static void Convert(ReadOnlySpan<double> values, Span<long> keys, ref long min, ref long max) =>
        Scan(MemoryMarshal.Cast<double, long>(values), keys, store: true, ref min, ref max);

    /// <summary>
    /// Smallest and largest of finite, non-empty <paramref name="values"/> as Math.Min and Math.Max
    /// folds give them (−0 below +0), compared as keys four at a time.
    /// </summary>
    public static (double Min, double Max) RangeOf(ReadOnlySpan<double> values)
    {
        long min = long.MaxValue;
        long max = long.MinValue;
        Scan(MemoryMarshal.Cast<double, long>(values), default, store: false, ref min, ref max);
        return (ValueOf(min), ValueOf(max));
    }

    /// <summary>Writes the values of <paramref name="keys"/> into <paramref name="values"/>.</summary>
    public static void ToValues(ReadOnlySpan<long> keys, Span<double> values)
    {
        Span<long> bits = MemoryMarshal.Cast<double, long>(values);
        int i = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            for (; i <= keys.Length - Vector256<long>.Count; i += Vector256<long>.Count)
            {
                Flip(Vector256.Create(keys.Slice(i, Vector256<long>.Count))).CopyTo(bits.Slice(i, Vector256<long>.Count));
            }
        }

        for (; i < keys.Length; i++)
        {
            bits[i] = Flip(keys[i]);
        }
    }

    /// <summary>The values of <paramref name="keys"/> as a new array.</summary>
    public static double[] ToValues(ReadOnlySpan<long> keys)
    {
        double[] values = GC.AllocateUninitializedArray<double>(keys.Length);
        ToValues(keys, values);
        return values;
    }

    /// <summary>The keys of finite <paramref name="values"/> as a new array.</summary>
    public static long[] Of(ReadOnlySpan<double> values)
    {
        var keys = new long[values.Length];
        long min = long.MaxValue;
        long max = long.MinValue;
        Convert(values, keys, ref min, ref max);
        return keys;
    }

    // Keys of the doubles whose bits are given, optionally written out, and their extremes. Inlined
    // into both callers, so the store test folds away.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static void Scan(ReadOnlySpan<long> bits, Span<long> keys, bool store, ref long min, ref long max)
    {
        int i = 0;
        if (Vector256.IsHardwareAccelerated && bits.Length >= Vector256<long>.Count)
        {
            var low = Vector256.Create(min);
            var high = Vector256.Create(max);
            for (; i <= bits.Length - Vector256<long>.Count; i += Vector256<long>.Count)
            {
                var key = Flip(Vector256.Create(bits.Slice(i, Vector256<long>.Count)));
                if (store)
                {
                    key.CopyTo(keys.Slice(i, Vector256<long>.Count));
                }

                low = Vector256.ConditionalSelect(Vector256.LessThan(key, low), key, low);
                high = Vector256.ConditionalSelect(Vector256.GreaterThan(key, high), key, high);
            }

            for (int lane = 0; lane < Vector256<long>.Count; lane++)
            {
                min = Math.Min(min, low[lane]);
                max = Math.Max(max, high[lane]);
            }
        }

        for (; i < bits.Length; i++)
        {
            long key = Flip(bits[i]);
            if (store)
            {
                keys[i] = key;
            }

            min = Math.Min(min, key);
            max = Math.Max(max, key);
        }
    }

    private static Vector256<long> Flip(Vector256<long> bits) => bits ^ Vector256.ShiftRightLogical(Vector256.LessThan(bits, Vector256<long>.Zero), 1);

    // Flips the magnitude bits of negative numbers; the sign bit is kept, so applying it twice is the identity.
    private static long Flip(long bits) => bits ^ (long)((ulong)(bits >> 63) >> 1);
}
