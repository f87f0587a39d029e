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
        new ComparisonSide(sketch, confidence).PopulationQuantile(q);

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
        return Shifts(new ComparisonSide(a, confidence), new ComparisonSide(b, confidence), probabilities);
    }

    /// <summary><see cref="Shifts(SeriesSketch, SeriesSketch, IReadOnlyList{double}, double)"/> between sides already prepared (at one confidence).</summary>
    internal static QuantileShift[] Shifts(ComparisonSide a, ComparisonSide b, IReadOnlyList<double> probabilities)
    {
        double confidence = a.ConfidenceLevel;
        var shifts = new QuantileShift[probabilities.Count];
        for (int i = 0; i < shifts.Length; i++)
        {
            double q = probabilities[i];
            QuantileEstimate from = a.PopulationQuantile(q);
            QuantileEstimate to = b.PopulationQuantile(q);
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
        double spread = ComparisonSide.SamplingZ(confidence) * Math.Sqrt(q * (1 - q) * count);
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
        return a.Count == 0 || b.Count == 0 ? (0, 0, 1) : KolmogorovSmirnov(new ComparisonSide(a, confidence), new ComparisonSide(b, confidence));
    }

    /// <summary><see cref="KolmogorovSmirnov(SeriesSketch, SeriesSketch, double)"/> between non-empty sides already prepared (at one confidence).</summary>
    internal static (double Distance, double Low, double High) KolmogorovSmirnov(ComparisonSide a, ComparisonSide b)
    {
        Span<(double Low, double High, BoundSource Source)> candidates = stackalloc (double, double, BoundSource)[3];
        candidates[0] = (0, 1, BoundSource.Range);
        int used = 1;
        double estimate = double.NaN;
        if (a.Quantiles is not null && b.Quantiles is not null)
        {
            (double distance, double slack) = RankDistance(a, b);
            estimate = distance;
            candidates[used++] = (Math.Max(0, distance - slack), Math.Min(1, distance + slack), slack == 0 ? BoundSource.Exact : BoundSource.RankError);
        }

        if (a.Buckets is not null && b.Buckets is not null)
        {
            int scale = Math.Min(a.Buckets.Scale, b.Buckets.Scale);
            (double low, double high) = BucketDistance(a.OccupiedAt(scale), a.Buckets.Count, b.OccupiedAt(scale), b.Buckets.Count);
            estimate = double.IsNaN(estimate) ? low : estimate;
            candidates[used++] = (low, high, BoundSource.LogBuckets);
        }

        Bounded d = Bounded.Intersect(candidates[..used]);
        return (double.IsNaN(estimate) ? d.Middle : Math.Clamp(estimate, d.Low, d.High), d.Low, d.High);
    }

    // The estimated CDFs compared at every retained item of both (the step functions only change
    // there), in one merge walk over the two ascending item lists.
    private static (double Distance, double Slack) RankDistance(ComparisonSide a, ComparisonSide b)
    {
        KllSortedView aView = a.Bounds.Rank!.View;
        KllSortedView bView = b.Bounds.Rank!.View;
        long na = aView.Count;
        long nb = bView.Count;
        ReadOnlySpan<double> aValues = aView.Values;
        ReadOnlySpan<double> bValues = bView.Values;
        var aSteps = new AscendingCounts(aView);
        var bSteps = new AscendingCounts(bView);
        Int128 largest = 0;
        int i = 0;
        int j = 0;
        while (i < aValues.Length || j < bValues.Length)
        {
            double x = j == bValues.Length || (i < aValues.Length && aValues[i] <= bValues[j]) ? aValues[i++] : bValues[j++];
            largest = Int128.Max(largest, DistanceWalks.Difference(aSteps.CountAtOrBelow(x), na, bSteps.CountAtOrBelow(x), nb));
        }

        double delta = 1 - a.ConfidenceLevel;
        return (Share(largest, na, nb), (a.Quantiles!.RankErrorCount(delta / 4) / na) + (b.Quantiles!.RankErrorCount(delta / 4) / nb));
    }

    private static (double Low, double High) BucketDistance(OccupiedLogBuckets a, long na, OccupiedLogBuckets b, long nb)
    {
        var walk = new BucketDistanceWalk(na, nb);

        // Value order: negative buckets from the largest magnitude down, the zeros, positives upwards.
        walk.Over(a.Negative, b.Negative, descending: true);
        if (a.ZeroCount > 0 || b.ZeroCount > 0)
        {
            walk.Step(a.ZeroCount, b.ZeroCount);
        }

        walk.Over(a.Positive, b.Positive, descending: false);

        // One rounding each; an ulp outward keeps the certain bounds certain.
        return (Math.BitDecrement(Share(walk.Low, na, nb)), Math.BitIncrement(Share(walk.High, na, nb)));
    }

    private static double Share(Int128 difference, long na, long nb) => Math.Clamp((double)difference / ((double)na * nb), 0, 1);
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
