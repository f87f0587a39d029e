using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// An OpenTelemetry exponential histogram point becomes a sketch without loss: its buckets, folded
/// to the sketch's scale, are the buckets the values themselves would have filled, and its totals
/// are the moments' count, sum and extremes, with the spread declared unknown.
/// </summary>
public class ExponentialHistogramImportTests
{
    [Fact]
    public void A_finer_point_folds_into_exactly_the_buckets_its_values_fill()
    {
        var rng = new Random(22);
        double[] values = Enumerable.Range(0, 5000).Select(_ => Math.Exp(rng.NextDouble() * 4) * (rng.NextDouble() < 0.1 ? -1 : 1)).Append(0).ToArray();

        // The producer's point at scale 8; the data model's downscaling (index i at scale s is
        // index i >> d at scale s − d) must give what adding the values at scale 6 gives.
        var fine = new LogBucketSketch(scale: 8);
        fine.Add(values);
        Assert.Equal(8, fine.Scale);
        var point = PointOf(fine, values);
        SeriesSketch imported = ExponentialHistogramImport.ToSketch(point, SeriesSketchOptions.Default);

        var direct = new LogBucketSketch(scale: 6);
        direct.Add(values);
        LogBucketSketch buckets = imported.LogBuckets!;
        Assert.Equal(6, buckets.Scale);
        Assert.Equal(direct.ZeroCount, buckets.ZeroCount);
        Assert.Equal(direct.PositiveBuckets(), buckets.PositiveBuckets());
        Assert.Equal(direct.NegativeBuckets(), buckets.NegativeBuckets());
        Assert.Null(ExponentialHistogramImport.Unrepresentable(point, SeriesSketchOptions.Default));
    }

    [Fact]
    public void Totals_are_kept_exactly_and_the_spread_stays_unknown_through_merges_and_storage()
    {
        double[] values = [1.5, 2.5, 3.5, 7];
        var fine = new LogBucketSketch(scale: 8);
        fine.Add(values);
        SeriesSketch imported = ExponentialHistogramImport.ToSketch(PointOf(fine, values), SeriesSketchOptions.Default);

        var raw = new SeriesSketch(seed: 1);
        raw.Add([2.0, 4.0]);
        raw.Merge(imported);
        var summary = SketchCodec.FromState(SketchCodec.ToState(raw)).Summarize();

        // Count, sum and extremes add up as the values would (common practice: totals are additive).
        Assert.Equal(6, summary.Count);
        Assert.Equal(20.5, summary.Sum);
        Assert.Equal(1.5, summary.Min);
        Assert.Equal(7, summary.Max);
        Assert.Null(summary.Variance);
        Assert.Null(summary.Skewness);
        Assert.Null(summary.Kurtosis);
        Assert.False(raw.Moments.CentralMomentsKnown);
    }

    [Fact]
    public void A_stored_state_claiming_unknown_spread_with_moment_sums_is_refused()
    {
        var state = SketchCodec.ToState(MomentSketch.FromTotals(3, 6, 1, 3));
        Assert.True(state.CentralMomentsUnknown);
        state.M2 = 2;

        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.FromState(state));
        Assert.Contains("central_moments_unknown", ex.Message, StringComparison.Ordinal);
    }

    private static ExponentialHistogramPoint PointOf(LogBucketSketch sketch, double[] values)
    {
        static (int Offset, ulong[] Counts) Dense(IEnumerable<(int Index, long Count)> buckets)
        {
            var list = buckets.ToList();
            if (list.Count == 0)
            {
                return (0, []);
            }

            int first = list.Min(b => b.Index);
            var counts = new ulong[list.Max(b => b.Index) - first + 1];
            foreach (var (index, count) in list)
            {
                counts[index - first] = (ulong)count;
            }

            return (first, counts);
        }

        var (positiveOffset, positive) = Dense(sketch.PositiveBuckets());
        var (negativeOffset, negative) = Dense(sketch.NegativeBuckets());
        return new ExponentialHistogramPoint(sketch.Scale, sketch.ZeroCount, positiveOffset, positive, negativeOffset, negative, values.Length, values.Sum(), values.Min(), values.Max());
    }
}
