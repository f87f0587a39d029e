using MathNet.Numerics.Distributions;
using SummaryService.Formats.V1;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Summaries;
using BoundSource = SummaryService.Sketches.Summaries.BoundSource;
using SketchForm = SummaryService.Sketches.Summaries.SketchForm;
using Summary = SummaryService.Sketches.Summaries.Summary;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// A summary's bounds describe the parts it was read from: the full form (KLL and log buckets),
/// the compact form of an aged bucket (log buckets), a sketch written before log buckets (KLL), and
/// a merge of the last two (moments only, quantiles bounded by the exact [min, max]).
/// </summary>
public class SketchFormTests
{
    [Fact]
    public void A_compact_sketch_keeps_moments_log_buckets_and_exact_modes_and_round_trips()
    {
        SeriesSketch sketch = Latencies(20_000, seed: 1);
        Summary before = sketch.Summarize();
        long fullBytes = sketch.EstimatedBytes;

        sketch.Compact();
        SeriesSketch read = SketchCodec.Deserialize(SketchCodec.Serialize(sketch));

        Assert.Null(read.Quantiles);
        Assert.False(read.KeepsRankPart);
        Assert.True(sketch.EstimatedBytes < fullBytes / 2, $"compact {sketch.EstimatedBytes} B against full {fullBytes} B");
        Summary after = read.Summarize();
        Assert.Equal(SketchForm.LogBuckets, after.Form);
        Assert.Equal((before.Count, before.Mean, before.Variance), (after.Count, after.Mean, after.Variance));
        Assert.Equal(SketchCodec.Serialize(sketch), SketchCodec.Serialize(read));
    }

    [Fact]
    public void A_compact_sketch_of_few_values_stays_exact_and_grows_without_a_rank_part()
    {
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add([3.0, 1.0, 2.0]);
        sketch.Compact();
        SeriesSketch read = SketchCodec.Deserialize(SketchCodec.Serialize(sketch));

        Assert.True(read.IsSmall);
        Assert.True(read.Summarize().Exact);
        read.Add(Enumerable.Range(0, 1000).Select(i => i + 0.5).ToArray());
        Assert.Null(read.Quantiles);
        Assert.NotNull(read.LogBuckets);
    }

    [Fact]
    public void Merging_full_into_compact_and_compact_into_full_gives_the_compact_form()
    {
        SeriesSketch compact = Latencies(5000, seed: 2);
        compact.Compact();
        SeriesSketch full = Latencies(5000, seed: 3);

        SeriesSketch a = compact.Clone();
        a.Merge(full);
        SeriesSketch b = full.Clone();
        b.Merge(compact);

        Assert.Equal(SketchForm.LogBuckets, a.Summarize().Form);
        Assert.Equal(SketchForm.LogBuckets, b.Summarize().Form);
        Assert.Equal(SketchCodec.ToState(a).LogBuckets, SketchCodec.ToState(b).LogBuckets);
    }

    [Fact]
    public void A_format_1_sketch_that_compacted_answers_from_its_kll_part_and_a_merge_with_compact_from_the_range()
    {
        SeriesSketchState state = SketchCodec.ToState(Latencies(20_000, seed: 4));
        state.Version = SketchCodec.RankOnlyVersion;
        state.LogBuckets = null;
        state.NoLogBuckets = false;
        state.Modes = new ModeState(state.Modes) { Continuous = false };
        SeriesSketch legacy = SketchCodec.FromState(WithCountMinModes(state));

        Summary rankOnly = legacy.Summarize();
        Assert.Equal(SketchForm.RankOnly, rankOnly.Form);
        Assert.All(rankOnly.Quantiles, q => Assert.True(q.LowSource is BoundSource.RankError or BoundSource.Range));

        SeriesSketch compact = Latencies(1000, seed: 5);
        compact.Compact();
        legacy.Merge(compact);
        Summary momentsOnly = legacy.Summarize(new SummaryOptions { Quantiles = [0.5] });

        Assert.Equal(SketchForm.MomentsOnly, momentsOnly.Form);
        Assert.Equal((momentsOnly.Min!.Value, momentsOnly.Max!.Value), (momentsOnly.Quantiles[0].Low, momentsOnly.Quantiles[0].High));
        Assert.Equal(BoundSource.Range, momentsOnly.Quantiles[0].LowSource);
    }

    private static SeriesSketchState WithCountMinModes(SeriesSketchState state)
    {
        // A version-1 writer kept counting continuous data in the count-min form.
        var modes = new ModeSketch();
        modes.Add(Enumerable.Range(0, (int)state.Moments.Count).Select(i => (double)(i % 500)).ToArray());
        state.Modes = SketchCodec.ToState(modes);
        return state;
    }

    private static SeriesSketch Latencies(int n, int seed)
    {
        var rng = new Random(seed);
        var sketch = new SeriesSketch(seed: (ulong)seed);
        sketch.Add(Enumerable.Range(0, n).Select(_ => LogNormal.Sample(rng, 4, 0.6)).ToArray());
        return sketch;
    }
}
