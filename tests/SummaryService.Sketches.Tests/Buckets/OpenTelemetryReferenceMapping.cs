using System.Numerics;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The index mapping as the OpenTelemetry metrics data model writes it (specification/metrics/
/// data-model.md, "ExponentialHistogram" → "Producer Expectations"), transcribed from its Go
/// pseudo-code, plus the definition itself evaluated with exact integers. The tests hold the
/// project's table-driven mapping against both.
/// </summary>
internal static class OpenTelemetryReferenceMapping
{
    /// <summary>"Scale Zero: Extract the Exponent", the frexp form with its power-of-two special case.</summary>
    public static int MapToIndexScale0(double value)
    {
        (double fraction, int exponent) = Frexp(value);
        exponent--;
        if (fraction == 0.5)
        {
            // "Special case for powers of two: they fall into the bucket numbered one less."
            exponent--;
        }

        return exponent;
    }

    /// <summary>"Negative Scale: Extract and Shift the Exponent": MapToIndexScale0(value) &gt;&gt; −scale.</summary>
    public static int MapToIndexNegativeScale(double value, int scale) => MapToIndexScale0(value) >> -scale;

    /// <summary>"All Scales: Use the Logarithm Function", the form that is exact for powers of two.</summary>
    public static int MapToIndexLogarithm(double value, int scale)
    {
        (double fraction, int exponent) = Frexp(value);
        if (fraction == 0.5)
        {
            return ((exponent - 1) << scale) - 1;
        }

        double scaleFactor = Math.ScaleB(1 / Math.Log(2), scale);
        return (int)Math.Floor(Math.Log(value) * scaleFactor);
    }

    /// <summary>
    /// The definition, "bucket identified by index represents values greater than base**index and
    /// less than or equal to base**(index+1)", decided exactly: with value = m·2^e (m an integer) and
    /// N = 2^scale, base^i &lt; value ⇔ 2^i &lt; value^N for scale ≥ 0, and for scale &lt; 0 the
    /// boundaries are powers of two, compared directly.
    /// </summary>
    public static bool InBucket(double value, int scale, int index) =>
        Above(value, scale, index) && !Above(value, scale, (long)index + 1);

    /// <summary>Go's math.Frexp: fraction in [0.5, 1) and exponent with value = fraction·2^exponent (normal values).</summary>
    private static (double Fraction, int Exponent) Frexp(double value)
    {
        int exponent = Math.ILogB(value) + 1;
        return (Math.ScaleB(value, -exponent), exponent);
    }

    // Whether value > base^index, exactly.
    private static bool Above(double value, int scale, long index)
    {
        (BigInteger m, int e) = Integral(value);
        if (scale <= 0)
        {
            long exponent = index << -scale;
            return Compare(m, e, BigInteger.One, exponent) > 0;
        }

        int n = 1 << scale;

        // value^N = m^N · 2^(eN) against 2^index.
        return Compare(BigInteger.Pow(m, n), (long)e * n, BigInteger.One, index) > 0;
    }

    // Sign of a·2^x − b·2^y for positive integers a, b.
    private static int Compare(BigInteger a, long x, BigInteger b, long y)
    {
        long shift = Math.Min(x, y);
        return (a << (int)(x - shift)).CompareTo(b << (int)(y - shift));
    }

    // value = m · 2^e with m an integer.
    private static (BigInteger M, int E) Integral(double value)
    {
        long bits = BitConverter.DoubleToInt64Bits(value);
        int raw = (int)((bits >> 52) & 0x7FF);
        long fraction = bits & ((1L << 52) - 1);
        return raw == 0 ? (new BigInteger(fraction), -1074) : (new BigInteger(fraction | (1L << 52)), raw - 1075);
    }
}
