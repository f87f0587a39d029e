using System.Numerics;
using System.Runtime.CompilerServices;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// The bucket index mapping of the OpenTelemetry exponential histogram (metrics data model, section
/// "ExponentialHistogram": base = 2^(2^−scale); bucket i holds the magnitudes in (base^i, base^(i+1)]),
/// computed exactly for every finite magnitude, and the exact double boundaries of each bucket.
/// </summary>
/// <remarks>
/// <para>Scale ≤ 0 follows the data model's "Scale Zero: Extract the Exponent" and "Negative Scale:
/// Extract and Shift the Exponent": the index is the base-2 exponent of the magnitude, one less for
/// an exact power of two (it is the upper, inclusive end of the bucket below), shifted right by
/// −scale. Scale &gt; 0 splits each octave into N = 2^scale buckets; in place of the data model's
/// logarithm method (inexact near boundaries) it compares the significand with exact boundary
/// significands (<see cref="SignificandBoundaries"/>), the "Positive Scale: Use a Lookup Table"
/// method, which gives the index the logarithm method defines without its rounding error, in a few
/// instructions. Subnormal magnitudes are mapped exactly too.</para>
/// <para>To find the sub-bucket in constant time, the significand range is cut into 2N equal slots;
/// boundaries are more than a slot apart, so each slot holds at most one, and a slot entry packs that
/// boundary (or 2^52 for none) with the number of boundaries below the slot.</para>
/// </remarks>
internal sealed class ExponentialMapping
{
    /// <summary>Coarsest scale: base 2^1024, two buckets span every double.</summary>
    public const int MinScale = -10;

    /// <summary>Finest scale: base 2^(1/256), relative bucket width 0.27%.</summary>
    public const int MaxScale = 8;

    internal const int SignificandBits = 52;
    internal const long SignificandMask = (1L << SignificandBits) - 1;
    private const int ExponentBias = 1023;
    internal const int BelowBits = 10;
    internal const long BelowMask = (1 << BelowBits) - 1;

    private static readonly ExponentialMapping[] s_byScale = CreateAll();

    private ExponentialMapping(int scale)
    {
        Scale = scale;
        ScaleUp = Math.Max(scale, 0);
        ScaleDown = Math.Max(-scale, 0);
        SlotShift = SignificandBits - (ScaleUp + 1);
        Slots = BuildSlots(ScaleUp, SlotShift);
        Base = Math.Pow(2, Math.ScaleB(1, -scale));
        RelativeError = (Base - 1) / (Base + 1);
    }

    /// <summary>The scale.</summary>
    public int Scale { get; }

    /// <summary>base = 2^(2^−scale), the ratio of a bucket's upper to its lower boundary.</summary>
    public double Base { get; }

    /// <summary>
    /// (base − 1)/(base + 1): the largest relative distance from a bucket's midpoint to any value in
    /// it, so the bound a value interval read from one bucket carries.
    /// </summary>
    public double RelativeError { get; }

    /// <summary>max(scale, 0): bits of sub-bucket index within an octave.</summary>
    internal int ScaleUp { get; }

    /// <summary>max(−scale, 0): right shift from the scale-0 index.</summary>
    internal int ScaleDown { get; }

    /// <summary>Right shift from a significand to its slot.</summary>
    internal int SlotShift { get; }

    /// <summary>Per slot: (boundary significand &lt;&lt; 10) | boundaries below the slot.</summary>
    internal long[] Slots { get; }

    /// <summary>The mapping at <paramref name="scale"/>, in [<see cref="MinScale"/>, <see cref="MaxScale"/>].</summary>
    public static ExponentialMapping ForScale(int scale)
    {
        RequireScale(scale);
        return s_byScale[scale - MinScale];
    }

    /// <summary>Rejects a scale outside [<see cref="MinScale"/>, <see cref="MaxScale"/>].</summary>
    public static void RequireScale(int scale)
    {
        if (scale is < MinScale or > MaxScale)
        {
            throw new ArgumentOutOfRangeException(nameof(scale), scale, $"Scale must be between {MinScale} and {MaxScale}.");
        }
    }

    /// <summary>(base − 1)/(base + 1) at <paramref name="scale"/>.</summary>
    public static double RelativeErrorAt(int scale) => ForScale(scale).RelativeError;

    /// <summary>Index of the bucket holding the finite magnitude <paramref name="magnitude"/> &gt; 0.</summary>
    public int IndexOf(double magnitude)
    {
        long bits = BitConverter.DoubleToInt64Bits(magnitude) & long.MaxValue;
        int exponent = (int)(bits >> SignificandBits) - ExponentBias;
        long significand = bits & SignificandMask;
        if (exponent == -ExponentBias)
        {
            (exponent, significand) = Normalize(significand);
        }

        return IndexOf(exponent, significand);
    }

    /// <summary>Index from an unbiased exponent and 52 fraction bits (see the remarks).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal int IndexOf(int exponent, long significand)
    {
        long slot = Slots[(int)(significand >> SlotShift)];
        int within = (int)(slot & BelowMask) + ((slot >> BelowBits) < significand ? 1 : 0) - 1;
        return ((exponent << ScaleUp) + within) >> ScaleDown;
    }

    /// <summary>
    /// The largest double at or below base^<paramref name="index"/>, exactly: 0 below the subnormal
    /// range and <see cref="double.MaxValue"/> past the largest double. Bucket i then holds exactly
    /// the doubles v with Floor(i) &lt; v ≤ Floor(i + 1).
    /// </summary>
    public double Floor(long index)
    {
        // exponent and significand of base^index = 2^(index / 2^scale).
        long exponent;
        long significand;
        if (Scale <= 0)
        {
            exponent = index << ScaleDown;
            significand = 0;
        }
        else
        {
            exponent = index >> Scale;
            int k = (int)(index & ((1 << Scale) - 1));
            significand = SignificandBoundaries.AtMaxScale[k << (MaxScale - Scale)];
        }

        if (exponent > ExponentBias)
        {
            return double.MaxValue;
        }

        if (exponent >= 1 - ExponentBias)
        {
            return BitConverter.Int64BitsToDouble(((exponent + ExponentBias) << SignificandBits) | significand);
        }

        // Subnormal: the value is (2^52 + significand)·2^(exponent − 52); dropping the bits below
        // 2^−1074 rounds it down.
        long shift = 1 - ExponentBias - exponent;
        return shift >= 64 ? 0 : BitConverter.Int64BitsToDouble(((1L << SignificandBits) | significand) >> (int)shift);
    }

    /// <summary>Smallest and largest double in bucket <paramref name="index"/> (magnitudes).</summary>
    public (double Low, double High) Bounds(int index) => (Math.BitIncrement(Floor(index)), Floor((long)index + 1));

    /// <summary>Exponent and fraction bits of a subnormal significand, as if it were normal.</summary>
    internal static (int Exponent, long Significand) Normalize(long subnormal)
    {
        int top = 63 - BitOperations.LeadingZeroCount((ulong)subnormal);
        return (top - 1074, (subnormal << (SignificandBits - top)) & SignificandMask);
    }

    private static long[] BuildSlots(int scale, int slotShift)
    {
        int n = 1 << scale;
        var boundaries = new long[n];
        for (int k = 0; k < n; k++)
        {
            boundaries[k] = SignificandBoundaries.AtMaxScale[k << (MaxScale - scale)];
        }

        var slots = new long[2 * n];
        int next = 0;
        for (int j = 0; j < slots.Length; j++)
        {
            long start = (long)j << slotShift;
            long end = start + (1L << slotShift);
            int below = next;
            long boundary = 1L << SignificandBits;
            if (next < n && boundaries[next] < end)
            {
                boundary = boundaries[next++];
            }

            if (next < n && boundaries[next] < end)
            {
                throw new InvalidOperationException($"Two bucket boundaries fall into one slot at scale {scale}.");
            }

            slots[j] = (boundary << BelowBits) | (long)below;
        }

        return slots;
    }

    private static ExponentialMapping[] CreateAll()
    {
        var all = new ExponentialMapping[MaxScale - MinScale + 1];
        for (int scale = MinScale; scale <= MaxScale; scale++)
        {
            all[scale - MinScale] = new ExponentialMapping(scale);
        }

        return all;
    }
}
