using System.Numerics;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// Mean and sample variance of doubles by exact rational arithmetic: every finite double is an
/// integer multiple of 2^−1074, so sums and sums of squares of the scaled integers are exact, and
/// only the final conversion to double rounds. Used where even a compensated computation would
/// be a second opinion rather than the truth.
/// </summary>
internal static class ExactStatistics
{
    private const int Scale = 1074;

    public static double Mean(ReadOnlySpan<double> values)
    {
        BigInteger sum = BigInteger.Zero;
        foreach (double v in values)
        {
            sum += Scaled(v);
        }

        return Ratio(sum, values.Length, -Scale);
    }

    /// <summary>Σ(x − mean)² / (n − 1) = (n·Σx² − (Σx)²) / (n·(n − 1)), exactly, then rounded.</summary>
    public static double Variance(ReadOnlySpan<double> values)
    {
        BigInteger sum = BigInteger.Zero;
        BigInteger squares = BigInteger.Zero;
        foreach (double v in values)
        {
            BigInteger x = Scaled(v);
            sum += x;
            squares += x * x;
        }

        BigInteger n = values.Length;
        return Ratio((n * squares) - (sum * sum), n * (n - 1), -2 * Scale);
    }

    /// <summary>v · 2^1074 as an exact integer.</summary>
    private static BigInteger Scaled(double v)
    {
        long bits = BitConverter.DoubleToInt64Bits(v);
        int exponent = (int)((bits >> 52) & 0x7FF);
        long mantissa = bits & 0xF_FFFF_FFFF_FFFFL;
        if (exponent != 0)
        {
            mantissa |= 1L << 52;
        }

        // v = mantissa · 2^(max(exponent, 1) − 1075), so v · 2^1074 = mantissa · 2^(max(exponent, 1) − 1).
        BigInteger magnitude = new BigInteger(mantissa) << (Math.Max(exponent, 1) - 1);
        return bits < 0 ? -magnitude : magnitude;
    }

    /// <summary>numerator / denominator · 2^exponent, rounded once to double (denominator positive).</summary>
    private static double Ratio(BigInteger numerator, BigInteger denominator, int exponent)
    {
        if (numerator.IsZero)
        {
            return 0;
        }

        int sign = numerator.Sign;
        numerator = BigInteger.Abs(numerator);

        // Keep about 64 significant bits in the integer quotient; the truncation is far below a double's ulp.
        long shift = 64 - (numerator.GetBitLength() - denominator.GetBitLength());
        BigInteger quotient = shift >= 0 ? (numerator << (int)shift) / denominator : numerator / (denominator << (int)-shift);
        return sign * Math.ScaleB((double)quotient, exponent - (int)shift);
    }
}
