using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Quantiles;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// Comparisons read each side's population quantile from the intersected intervals, so a tail move
/// that the KLL bound alone cannot resolve is called, while two samples of one distribution are not
/// told apart more often than the confidence allows; the Kolmogorov–Smirnov bounds hold the exact
/// two-sample statistic.
/// </summary>
public class ComparisonTests
{
    [Fact]
    public void A_one_and_a_half_fold_move_of_the_slowest_five_percent_is_called_at_p99_and_not_at_the_median()
    {
        // Issue case: 60,000 latencies a side, the top 5% of side b 1.5 times slower.
        double[] a = TestData.LogNormal(60_000, seed: 1, mu: Math.Log(100), sigma: 0.5);
        double cut = new ExactReference(a).Quantile(0.95);
        double[] b = [.. a.Select(v => v > cut ? v * 1.5 : v)];

        QuantileShift p99 = SketchComparison.Shift(Sketch(a, 1), Sketch(b, 2), 0.99, 0.99);
        QuantileShift median = SketchComparison.Shift(Sketch(a, 1), Sketch(b, 2), 0.5, 0.99);

        Assert.True(p99.Significant, $"p99 {p99.A} → {p99.B} not called");
        Assert.True(p99.Low > 0);
        Assert.False(median.Significant, $"median {median.A} → {median.B} called");
    }

    [Fact]
    public void Two_hundred_thousand_latencies_with_a_two_percent_slow_cluster_give_a_p99_interval_within_a_percent()
    {
        // Issue case: 200,000 latencies, 2% in a slow cluster; the KLL bound alone gave ±64% at p99.
        var rng = new Random(3);
        double[] values = Enumerable.Range(0, 200_000)
            .Select(_ => rng.NextDouble() < 0.02 ? LogNormal.Sample(rng, Math.Log(2000), 0.3) : LogNormal.Sample(rng, Math.Log(120), 0.35))
            .ToArray();
        var reference = new ExactReference(values);

        QuantileEstimate p99 = Sketch(values, 4).Summarize(new SummaryOptions { Quantiles = [0.99] }).Quantiles[0];

        Assert.InRange(reference.Quantile(0.99), p99.Low, p99.High); // MathNet R7
        Assert.True((p99.High - p99.Low) / 2 <= 0.01 * p99.Value, $"p99 {p99.Value} in [{p99.Low}, {p99.High}]");
        Assert.Equal(BoundSource.LogBuckets, p99.LowSource);
    }

    [Fact]
    [Trait("Duration", "Long")]
    public void Samples_of_one_distribution_are_told_apart_no_more_often_than_the_confidence_allows()
    {
        const int Pairs = 100;
        double[] probabilities = [0.5, 0.9, 0.99, 0.999];
        var called = new int[probabilities.Length];
        for (int pair = 0; pair < Pairs; pair++)
        {
            SeriesSketch a = Sketch(TestData.LogNormal(20_000, seed: 1000 + pair, mu: 4, sigma: 0.7), (ulong)pair + 1);
            SeriesSketch b = Sketch(TestData.LogNormal(20_000, seed: 5000 + pair, mu: 4, sigma: 0.7), (ulong)pair + 7000);
            for (int i = 0; i < probabilities.Length; i++)
            {
                called[i] += SketchComparison.Shift(a, b, probabilities[i], 0.99).Significant ? 1 : 0;
            }
        }

        // Each side's interval fails with probability at most δ = 1%, so a false call needs a failure:
        // at most 2δ per pair (binomial allowance at the 0.1% level, QuantileTrialCounter).
        int allowed = QuantileTrialCounter.AllowedMisses(Pairs, 0.02);
        Assert.All(called, c => Assert.True(c <= allowed, $"{c} of {Pairs} same-distribution pairs called significant (allowed {allowed})"));
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Kolmogorov_smirnov_bounds_hold_the_exact_two_sample_statistic(bool compact)
    {
        double[] a = TestData.LogNormal(30_000, seed: 11, mu: 3, sigma: 0.5);
        double[] b = TestData.LogNormal(25_000, seed: 12, mu: 3.05, sigma: 0.55);
        SeriesSketch sa = Sketch(a, 1);
        SeriesSketch sb = Sketch(b, 2);
        if (compact)
        {
            sa.Compact();
            sb.Compact();
        }

        (double distance, double low, double high) = SketchComparison.KolmogorovSmirnov(sa, sb, 0.99);

        // The two-sample statistic by its definition, sup over x of |F_a(x) − F_b(x)| (common practice).
        var ra = new ExactReference(a);
        var rb = new ExactReference(b);
        double exact = a.Concat(b).Max(x => Math.Abs((ra.CountAtOrBelow(x) / (double)a.Length) - (rb.CountAtOrBelow(x) / (double)b.Length)));
        Assert.InRange(exact, low, high);
        Assert.InRange(distance, low, high);
        Assert.True(high - low < 0.02, $"[{low}, {high}]");
    }

    private static SeriesSketch Sketch(double[] values, ulong seed)
    {
        var sketch = new SeriesSketch(seed: seed);
        sketch.Add(values);
        return sketch;
    }
}
