using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The log buckets count exactly: every value lands in the bucket the OpenTelemetry mapping gives
/// (see <see cref="ExponentialMappingTests"/>), merges equal the sketch of the concatenated stream
/// whatever the order and scales, and a scale drop combines neighbours exactly.
/// </summary>
public class LogBucketSketchTests
{
    [Fact]
    public void Each_value_is_counted_in_its_bucket_with_zeros_and_negatives_apart()
    {
        var sketch = new LogBucketSketch();
        sketch.Add([1.5, 1.5, -1.5, 0.0, -0.0, 3.0, 1e-320]);

        // 1e-320 to 3 spans 1,064 octaves: the scale drops to 0, one bucket an octave.
        Assert.Equal(0, sketch.Scale);
        ExponentialMapping mapping = sketch.Mapping;

        Assert.Equal(7, sketch.Count);
        Assert.Equal(2, sketch.ZeroCount);
        Assert.Equal(2, sketch.PositiveCount(mapping.IndexOf(1.5)));
        Assert.Equal(1, sketch.NegativeCount(mapping.IndexOf(1.5)));
        Assert.Equal(1, sketch.PositiveCount(mapping.IndexOf(3.0)));
        Assert.Equal(1, sketch.PositiveCount(mapping.IndexOf(1e-320)));
    }

    [Fact]
    public void Span_and_single_value_adds_give_the_same_counts()
    {
        // Mixed signs, zeros, subnormals, a run of one value long enough to widen its counter twice
        // (over 255 and over 65,535), and a range wide enough to drop the scale on the way.
        var rng = new Random(3);
        var values = new List<double>();
        for (int i = 0; i < 50_000; i++)
        {
            double v = Math.Pow(10, (rng.NextDouble() * 30) - 15) * (rng.NextDouble() < 0.2 ? -1 : 1);
            values.Add(rng.NextDouble() < 0.05 ? 0 : v);
        }

        values.AddRange(Enumerable.Repeat(42.0, 70_000));
        values.Add(BitConverter.Int64BitsToDouble(5));
        double[] all = [.. values];

        var one = new LogBucketSketch(maxBuckets: 1024);
        var many = new LogBucketSketch(maxBuckets: 1024);
        foreach (double v in all)
        {
            one.Add(v);
        }

        for (int start = 0; start < all.Length; start += 777)
        {
            many.Add(all.AsSpan(start, Math.Min(777, all.Length - start)));
        }

        Assert.True(one.Scale < LogBucketSketch.DefaultScale, "30 decades must not fit 1024 buckets at scale 6");
        Assert.Equal(SketchCodec.ToState(one), SketchCodec.ToState(many));
        Assert.True(many.PositiveCount(many.Mapping.IndexOf(42.0)) >= 70_000);
        Assert.Equal(all.Length, many.Count);
    }

    [Fact]
    public void A_merge_tree_equals_the_sketch_of_all_values_at_the_coarsest_scale_needed()
    {
        var rng = new Random(4);
        double[] values = Enumerable.Range(0, 30_000).Select(_ => Math.Exp((rng.NextDouble() * 20) - 10) * (rng.NextDouble() < 0.1 ? -1 : 1)).ToArray();
        var whole = new LogBucketSketch(scale: 8, maxBuckets: 4096);
        whole.Add(values);

        // Pieces at scales 8, 4 and 6, merged in a random order.
        int[] scales = [8, 4, 6];
        var pieces = Enumerable.Range(0, 30).Select(i => new LogBucketSketch(scales[i % 3], 4096)).ToArray();
        for (int i = 0; i < values.Length; i++)
        {
            pieces[rng.Next(pieces.Length)].Add(values[i]);
        }

        var merged = new LogBucketSketch(scale: 8, maxBuckets: 4096);
        foreach (LogBucketSketch piece in pieces.OrderBy(_ => rng.Next()))
        {
            merged.Merge(piece);
        }

        Assert.Equal(4, merged.Scale);
        whole.DownscaleTo(4);
        Assert.Equal(SketchCodec.ToState(whole), SketchCodec.ToState(merged));
    }

    [Fact]
    public void A_scale_drop_adds_each_pair_of_neighbours_exactly()
    {
        // Data model, "Exponential Scale": buckets at one scale map exactly into those of lesser
        // scales ("perfect subsetting"): bucket j at scale s − 1 is buckets 2j and 2j + 1 at scale s.
        var rng = new Random(5);
        double[] values = Enumerable.Range(0, 10_000).Select(_ => Math.Exp(rng.NextDouble() * 8)).ToArray();
        var fine = new LogBucketSketch(scale: 7);
        fine.Add(values);
        LogBucketSketch coarse = fine.Clone();
        coarse.DownscaleTo(6);

        foreach ((int index, long count) in coarse.PositiveBuckets())
        {
            Assert.Equal(fine.PositiveCount(2 * index) + fine.PositiveCount((2 * index) + 1), count);
        }

        Assert.Equal(fine.Count, coarse.PositiveBuckets().Sum(b => b.Count));
    }

    [Fact]
    public void A_range_never_spans_more_than_its_bucket_limit()
    {
        var sketch = new LogBucketSketch(scale: 8, maxBuckets: 64);
        sketch.Add([1e-6, 1e6]);
        var occupied = sketch.PositiveBuckets().Select(b => b.Index).ToArray();

        Assert.True(occupied[^1] - occupied[0] < 64);

        // 40 octaves in 64 buckets: scale 0 (one bucket an octave) is the finest that fits.
        Assert.Equal(0, sketch.Scale);
    }

    [Fact]
    public void A_trimmed_sketch_keeps_its_counts_in_less_memory_and_a_clone_is_the_same_sketch()
    {
        var sketch = new LogBucketSketch();
        sketch.Add(Enumerable.Range(1, 300).Select(i => (double)i).ToArray());
        long working = sketch.EstimatedBytes;
        LogBucketSketch clone = sketch.Clone();
        Assert.Equal(working, clone.EstimatedBytes);

        sketch.TrimExcess();

        Assert.True(sketch.EstimatedBytes < working);
        Assert.Equal(SketchCodec.ToState(sketch), SketchCodec.ToState(clone));
    }
}
