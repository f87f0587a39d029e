using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// Two cumulative exponential histogram points of one stream differ by exactly the values recorded
/// between them (OpenTelemetry metrics data model, "Temporality": a cumulative point covers
/// everything since its start time); extremes the two points cannot tell are given as outer bounds
/// and said to be.
/// </summary>
public class ExponentialHistogramDifferenceTests
{
    private static readonly double[] Earlier = [3.25, 4.5, 6.75, 9.5, 12.25, 20];
    private static readonly double[] Between = [2.5, 5.5, 7.25, 11.75, 11.5];

    [Fact]
    public void Points_at_different_scales_differ_by_the_buckets_the_new_values_fill_at_the_coarser_scale()
    {
        // The earlier point at scale 8, the later one downscaled by its producer to scale 5 (data
        // model: index i at scale s is index i >> d at scale s − d).
        ExponentialHistogramPoint earlier = PointOf(Earlier, scale: 8);
        ExponentialHistogramPoint later = PointOf([.. Earlier, .. Between], scale: 5);

        ExponentialHistogramPoint difference = ExponentialHistogramDifference.Since(earlier, later)!;

        ExponentialHistogramPoint expected = PointOf(Between, scale: 5);
        Assert.Equal(5, difference.Scale);
        Assert.Equal(expected.PositiveOffset, difference.PositiveOffset);
        Assert.Equal(expected.Positive, difference.Positive);
        Assert.Equal(Between.Length, difference.Count);

        // Sums of multiples of 1/4 are exact in binary floating point (IEEE 754), so the difference is too.
        Assert.Equal(Between.Sum(), difference.Sum);
    }

    [Fact]
    public void A_new_minimum_is_exact_and_an_unchanged_maximum_is_bounded_by_the_highest_new_bucket()
    {
        ExponentialHistogramPoint difference = ExponentialHistogramDifference.Since(PointOf(Earlier, scale: 5), PointOf([.. Earlier, .. Between], scale: 5))!;

        // 2.5 is below the earlier minimum 3.25, so it was recorded in between: the exact minimum.
        Assert.Equal(2.5, difference.Min);

        // The maximum 20 was already there: the new values' largest, 11.75, is known only to lie in
        // its bucket (data model: index i holds (base^i, base^(i+1)]), whose upper edge bounds it.
        var mapping = ExponentialMapping.ForScale(5);
        (double low, double high) = mapping.Bounds(mapping.IndexOf(11.75));
        Assert.False(difference.ExtremesExact);
        Assert.Equal(high, difference.Max);
        Assert.True(low <= 11.75 && 11.75 <= difference.Max, $"the bound {difference.Max} must be at or above 11.75 within its bucket [{low}, {high}]");
    }

    [Fact]
    public void New_extremes_on_both_sides_are_exact()
    {
        ExponentialHistogramPoint difference = ExponentialHistogramDifference.Since(PointOf(Earlier, scale: 4), PointOf([.. Earlier, 1.5, 30], scale: 4))!;

        Assert.True(difference.ExtremesExact);
        Assert.Equal(1.5, difference.Min);
        Assert.Equal(30, difference.Max);
    }

    [Fact]
    public void Zeros_below_every_new_positive_value_are_the_exact_minimum()
    {
        ExponentialHistogramPoint difference = ExponentialHistogramDifference.Since(PointOf([0, 5, 40], scale: 3), PointOf([0, 5, 40, 0, 7, 50], scale: 3))!;

        Assert.Equal(1, difference.ZeroCount);
        Assert.Equal(0, difference.Min);
        Assert.Equal(50, difference.Max);
        Assert.True(difference.ExtremesExact);
    }

    [Fact]
    public void A_count_that_went_down_is_a_reset()
    {
        // Data model: a cumulative stream's counts only grow until it restarts; a drop means the
        // later point began a new accumulation.
        Assert.Null(ExponentialHistogramDifference.Since(PointOf(Earlier, scale: 5), PointOf([3.25, 4.5, 30, 31, 32, 33, 34], scale: 5)));
        Assert.Null(ExponentialHistogramDifference.Since(PointOf([0, 0, 5], scale: 5), PointOf([0, 5, 6], scale: 5)));
    }

    [Fact]
    public void Bounded_extremes_stay_bounded_through_merges_and_storage_and_quantiles_at_the_ends_are_intervals()
    {
        double[] all = [.. Earlier, .. Between];
        ExponentialHistogramPoint difference = ExponentialHistogramDifference.Since(PointOf(all, scale: 5), PointOf([.. all, 8, 9, 10], scale: 5))!;
        SeriesSketch sketch = ExponentialHistogramImport.ToSketch(difference, SeriesSketchOptions.Default);
        var exact = new SeriesSketch(seed: 3);
        exact.Add([8.5, 9.25]);
        exact.Merge(sketch);

        var stored = SketchCodec.Deserialize(SketchCodec.Serialize(exact));
        var summary = stored.Summarize(new Summaries.SummaryOptions { Quantiles = [0, 1] });

        Assert.True(SketchCodec.ToState(stored).Moments.ExtremesBounded);
        Assert.True(summary.ExtremesBounded);
        Assert.True(summary.Min <= 8 && summary.Max >= 10, $"[{summary.Min}, {summary.Max}] must hold every value 8 to 10");
        var (lowest, highest) = (summary.Quantiles[0], summary.Quantiles[1]);
        Assert.True(lowest.Low <= 8 && 8 <= lowest.High && lowest.Low < lowest.High, $"q=0 must be an interval holding 8, not [{lowest.Low}, {lowest.High}]");
        Assert.True(highest.Low <= 10 && 10 <= highest.High && highest.Low < highest.High, $"q=1 must be an interval holding 10, not [{highest.Low}, {highest.High}]");
    }

    private static ExponentialHistogramPoint PointOf(double[] values, int scale)
    {
        var buckets = new LogBucketSketch(scale: scale);
        buckets.Add(values);
        Assert.Equal(scale, buckets.Scale);
        var positive = buckets.PositiveBuckets().ToList();
        int offset = positive.Count == 0 ? 0 : positive[0].Index;
        var counts = new ulong[positive.Count == 0 ? 0 : positive[^1].Index - offset + 1];
        foreach (var (index, count) in positive)
        {
            counts[index - offset] = (ulong)count;
        }

        return new ExponentialHistogramPoint(scale, buckets.ZeroCount, offset, counts, 0, [], values.Length, values.Sum(), values.Min(), values.Max());
    }
}
