using System.Numerics;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// The bucket boundaries inside one octave, as significand bits: entry k is
/// ⌊2^(52 + k/N)⌋ − 2^52 for N = 2^<see cref="ExponentialMapping.MaxScale"/>, the 52 fraction bits
/// of the largest double at or below 2^(k/N). Every coarser positive scale uses every
/// 2^(MaxScale − scale)-th entry, since its boundaries are a subset (the "perfect subsetting" of
/// the OpenTelemetry metrics data model, section "Exponential Scale").
/// </summary>
/// <remarks>
/// For 0 &lt; k &lt; N the boundary 2^(k/N) is irrational (Gelfond–Schneider), so no double equals it
/// and a value's significand m lies above it exactly when m &gt; entry k. The entries are computed
/// with integers — M = ⌊2^(52 + k/N)⌋ is the integer with M^N ≤ 2^(52N + k) &lt; (M + 1)^N — so the
/// index mapping built on them is exact, unlike the logarithm method, which the data model warns
/// "is not guaranteed to be exactly correct near powers of two".
/// </remarks>
internal static class SignificandBoundaries
{
    private const int SignificandBits = 52;

    /// <summary>Entry k for k in [0, 2^MaxScale); entry 0 is 0 (the boundary 1 = 2^0 itself).</summary>
    public static readonly long[] AtMaxScale = Compute(1 << ExponentialMapping.MaxScale);

    private static long[] Compute(int n)
    {
        var entries = new long[n];
        for (int k = 1; k < n; k++)
        {
            BigInteger target = BigInteger.One << ((SignificandBits * n) + k);

            // A double estimate, off by at most a few units, corrected by exact integer comparisons.
            long m = (long)Math.Floor(Math.ScaleB(Math.Pow(2, (double)k / n), SignificandBits));
            while (BigInteger.Pow(m, n) > target)
            {
                m--;
            }

            while (BigInteger.Pow(m + 1, n) <= target)
            {
                m++;
            }

            entries[k] = m - (1L << SignificandBits);
        }

        return entries;
    }
}
