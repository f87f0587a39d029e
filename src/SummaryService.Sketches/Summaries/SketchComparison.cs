using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Compares two series sketches: quantile shifts whose verdict accounts for both the sketches'
/// approximation and the sampling noise of a sample quantile, and the Kolmogorov–Smirnov distance
/// with a bound. Each side's intervals are the summary's intersected ones (KLL ∩ log buckets ∩
/// range), so the log buckets' tight tails carry into the verdict.
/// </summary>
public static class SketchComparison
{
    /// <summary>
    /// The interval holding the population quantile q of one side: read at ranks q·n ± (t + z·s),
    /// where t is the part's own error (the KLL rank error at half the failure budget; none for the
    /// log buckets, whose ranks are exact) and z·s = z·sqrt(q(1−q)·n) is the distribution-free
    /// binomial spread of the rank of a sample quantile, z the standard normal quantile at
    /// 1 − δ/4 (MathNet.Numerics). Neither approximation nor sampling noise alone can then make
    /// two such intervals separate.
    /// </summary>
    public static QuantileEstimate PopulationQuantile(SeriesSketch sketch, double q, double confidence) =>
        new PopulationSide(sketch, confidence).Quantile(q);

    /// <summary>
    /// How quantile q moved from a to b; significant when the two population intervals do not
    /// overlap and both samples are large enough to bound it (<see cref="CanBound"/>).
    /// </summary>
    public static QuantileShift Shift(SeriesSketch a, SeriesSketch b, double q, double confidence) =>
        Shifts(a, b, [q], confidence)[0];

    /// <summary>
    /// <see cref="Shift"/> for several probabilities, each side's bounds prepared once (a sorted
    /// view of each part) rather than once per probability.
    /// </summary>
    public static QuantileShift[] Shifts(SeriesSketch a, SeriesSketch b, IReadOnlyList<double> probabilities, double confidence)
    {
        ArgumentNullException.ThrowIfNull(probabilities);
        var left = new PopulationSide(a, confidence);
        var right = new PopulationSide(b, confidence);
        var shifts = new QuantileShift[probabilities.Count];
        for (int i = 0; i < shifts.Length; i++)
        {
            double q = probabilities[i];
            QuantileEstimate from = left.Quantile(q);
            QuantileEstimate to = right.Quantile(q);
            bool apart = from.High < to.Low || to.High < from.Low;
            shifts[i] = new QuantileShift(q, from, to, apart && CanBound(a.Count, q, confidence) && CanBound(b.Count, q, confidence));
        }

        return shifts;
    }

    /// <summary>
    /// True when n values can bound the population quantile q at the confidence: the sampling ranks
    /// q·n ± z·sqrt(q(1−q)·n) stay at least one value inside the sample at both ends. Below that an
    /// end of the interval would be read at a rank beyond the data and clamped to the sample's own
    /// minimum or maximum, which holds the population quantile with far less than the confidence
    /// (five values all lie below the population p99 with probability 0.99⁵ ≈ 95%), so no verdict
    /// may rest on it. Quantiles 0 and 1 are never bounded: a sample's extremes say nothing certain
    /// about the population's.
    /// </summary>
    public static bool CanBound(long count, double q, double confidence)
    {
        Confidence.Require(confidence);
        double spread = SamplingZ(confidence) * Math.Sqrt(q * (1 - q) * count);
        return count > 0 && (q * count) - spread >= 1 && ((1 - q) * count) - spread >= 1;
    }

    /// <summary>
    /// The Kolmogorov–Smirnov distance two samples of one distribution stay within at the
    /// confidence: ε_a + ε_b with ε = sqrt(ln(4/δ)/(2n)). By the Dvoretzky–Kiefer–Wolfowitz
    /// inequality with Massart's constant (Massart 1990), each empirical CDF strays further than ε
    /// from the common one with probability at most δ/2, for any sample size and any distribution,
    /// ties included; the distance between the two is at most the sum of the two strays. A lower
    /// bound of the distance above this limit is a verdict that the distributions differ.
    /// </summary>
    public static double SameDistributionLimit(long countA, long countB, double confidence)
    {
        Confidence.Require(confidence);
        if (countA <= 0 || countB <= 0)
        {
            return 1;
        }

        double logTerm = Math.Log(4 / (1 - confidence)) / 2;
        return Math.Sqrt(logTerm / countA) + Math.Sqrt(logTerm / countB);
    }

    // z at 1 − δ/4: each end of the sampling interval fails with probability δ/4.
    private static double SamplingZ(double confidence) => Normal.InvCDF(0, 1, 1 - ((1 - confidence) / 4));

    /// <summary>
    /// D = sup_x |F_a(x) − F_b(x)| between the two samples, with an interval: the intersection of the
    /// KLL parts' estimate ± (t_a/n_a + t_b/n_b) (each estimated CDF off by at most t/n at a point,
    /// with probability 1 − δ/4) and, where both sides have log buckets, the certain bounds they give
    /// at their common scale: at the upper end of every bucket both CDFs are known exactly, so D is
    /// at least the largest difference there; inside a bucket each CDF stays between its values at
    /// the bucket's two ends, so D is at most the largest cross difference of those.
    /// </summary>
    public static (double Distance, double Low, double High) KolmogorovSmirnov(SeriesSketch a, SeriesSketch b, double confidence)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        Confidence.Require(confidence);
        if (a.Count == 0 || b.Count == 0)
        {
            return (0, 0, 1);
        }

        var (aRank, aBuckets, _) = a.FullParts();
        var (bRank, bBuckets, _) = b.FullParts();
        Span<(double Low, double High, BoundSource Source)> candidates = stackalloc (double, double, BoundSource)[3];
        candidates[0] = (0, 1, BoundSource.Range);
        int used = 1;
        double estimate = double.NaN;
        if (aRank is not null && bRank is not null)
        {
            (double distance, double slack) = RankDistance(aRank, bRank, confidence);
            estimate = distance;
            candidates[used++] = (Math.Max(0, distance - slack), Math.Min(1, distance + slack), slack == 0 ? BoundSource.Exact : BoundSource.RankError);
        }

        if (aBuckets is not null && bBuckets is not null)
        {
            (double low, double high) = BucketDistance(aBuckets, bBuckets);
            estimate = double.IsNaN(estimate) ? low : estimate;
            candidates[used++] = (low, high, BoundSource.LogBuckets);
        }

        Bounded d = Bounded.Intersect(candidates[..used]);
        return (double.IsNaN(estimate) ? d.Middle : Math.Clamp(estimate, d.Low, d.High), d.Low, d.High);
    }

    // The estimated CDFs compared at every retained item of both (the step functions only change there).
    private static (double Distance, double Slack) RankDistance(KllSketch a, KllSketch b, double confidence)
    {
        KllSortedView aView = a.CreateView();
        KllSortedView bView = b.CreateView();
        long na = aView.Count;
        long nb = bView.Count;
        Int128 largest = 0;
        foreach (double x in aView.Values.ToArray().Concat(bView.Values.ToArray()))
        {
            largest = Int128.Max(largest, Difference((long)aView.CountAtOrBelow(x), na, (long)bView.CountAtOrBelow(x), nb));
        }

        double delta = 1 - confidence;
        return (Share(largest, na, nb), (a.RankErrorCount(delta / 4) / na) + (b.RankErrorCount(delta / 4) / nb));
    }

    private static (double Low, double High) BucketDistance(LogBucketSketch a, LogBucketSketch b)
    {
        int scale = Math.Min(a.Scale, b.Scale);
        LogBucketSketch aCommon = AtScale(a, scale);
        LogBucketSketch bCommon = AtScale(b, scale);
        long na = aCommon.Count;
        long nb = bCommon.Count;
        Int128 low = 0;
        Int128 high = 0;
        long aBefore = 0;
        long bBefore = 0;
        foreach ((long aCount, long bCount) in BucketsInValueOrder(aCommon, bCommon))
        {
            long aAfter = aBefore + aCount;
            long bAfter = bBefore + bCount;
            low = Int128.Max(low, Difference(aAfter, na, bAfter, nb));
            high = Int128.Max(high, Int128.Max(Difference(aAfter, na, bBefore, nb), Difference(aBefore, na, bAfter, nb)));
            (aBefore, bBefore) = (aAfter, bAfter);
        }

        // One rounding each; an ulp outward keeps the certain bounds certain.
        return (Math.BitDecrement(Share(low, na, nb)), Math.BitIncrement(Share(high, na, nb)));
    }

    // |a/na − b/nb|·na·nb in integers, so that equal shares compare equal and the share is rounded once.
    private static Int128 Difference(long a, long na, long b, long nb) => Int128.Abs(((Int128)a * nb) - ((Int128)b * na));

    private static double Share(Int128 difference, long na, long nb) => Math.Clamp((double)difference / ((double)na * nb), 0, 1);

    private static LogBucketSketch AtScale(LogBucketSketch sketch, int scale)
    {
        if (sketch.Scale == scale)
        {
            return sketch;
        }

        LogBucketSketch copy = sketch.Clone();
        copy.DownscaleTo(scale);
        return copy;
    }

    // The union of both sketches' occupied buckets (at one scale the buckets are the same intervals)
    // in value order: negatives from the largest magnitude down, the zeros, positives upwards.
    private static IEnumerable<(long A, long B)> BucketsInValueOrder(LogBucketSketch a, LogBucketSketch b)
    {
        foreach (int index in a.NegativeBuckets().Select(x => x.Index).Union(b.NegativeBuckets().Select(x => x.Index)).OrderDescending())
        {
            yield return (a.NegativeCount(index), b.NegativeCount(index));
        }

        if (a.ZeroCount > 0 || b.ZeroCount > 0)
        {
            yield return (a.ZeroCount, b.ZeroCount);
        }

        foreach (int index in a.PositiveBuckets().Select(x => x.Index).Union(b.PositiveBuckets().Select(x => x.Index)).Order())
        {
            yield return (a.PositiveCount(index), b.PositiveCount(index));
        }
    }

    /// <summary>One side's bounds, prepared once for any number of population quantiles.</summary>
    private sealed class PopulationSide
    {
        private readonly SummaryBounds _bounds;
        private readonly double _z;
        private readonly long _count;

        public PopulationSide(SeriesSketch sketch, double confidence)
        {
            ArgumentNullException.ThrowIfNull(sketch);
            Confidence.Require(confidence);
            var (quantiles, buckets, _) = sketch.FullParts();
            _bounds = new SummaryBounds(sketch.Moments, quantiles, buckets, confidence);
            _z = SamplingZ(confidence);
            _count = sketch.Count;
        }

        public QuantileEstimate Quantile(double q)
        {
            double sampling = _z * Math.Sqrt(q * (1 - q) * _count);
            QuantileEstimate estimate = _bounds.Quantile(q);
            QuantileEstimate interval = _bounds.Quantile(q, sampling);
            return estimate with { Low = interval.Low, High = interval.High, LowSource = interval.LowSource, HighSource = interval.HighSource };
        }
    }
}

/// <summary>How one quantile moved from side a to side b.</summary>
/// <param name="Q">The probability.</param>
/// <param name="A">Side a's quantile, with the interval holding its population quantile.</param>
/// <param name="B">Side b's quantile, likewise.</param>
/// <param name="Significant">True when the two intervals do not overlap: the move exceeds the combined error.</param>
public readonly record struct QuantileShift(double Q, QuantileEstimate A, QuantileEstimate B, bool Significant)
{
    /// <summary>b − a.</summary>
    public double Delta => B.Value - A.Value;

    /// <summary>Smallest move consistent with both intervals: b_low − a_high.</summary>
    public double Low => B.Low - A.High;

    /// <summary>Largest move consistent with both intervals: b_high − a_low.</summary>
    public double High => B.High - A.Low;
}
