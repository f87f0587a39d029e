using SummaryService.Formats.V1;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.Edges;

/// <summary>Edge-bucket sketches written as sketch version 3 read back the same, and damaged states are refused.</summary>
public class EdgeStateTests
{
    [Fact]
    public void An_edge_sketch_reads_back_with_the_same_bytes_and_answers()
    {
        SeriesSketch sketch = EdgeAnswerTests.PointOf([1, 4, 6, 7, 9, 20, 700, 12000], EdgeAnswerTests.DefaultBounds).ToSketch(SeriesSketchOptions.Default);
        byte[] bytes = SketchCodec.Serialize(sketch);

        SeriesSketch read = SketchCodec.Deserialize(bytes);

        Assert.Equal(bytes, SketchCodec.Serialize(read));
        Assert.Equal(SketchCodec.EdgeVersion, SeriesSketchState.Parser.ParseFrom(bytes).Version);
        Assert.Equal(sketch.EdgeBuckets!.Edges, read.EdgeBuckets!.Edges);
        Assert.Equal(sketch.Summarize().Quantiles, read.Summarize().Quantiles);
    }

    [Fact]
    public void A_sketch_without_edges_is_still_written_as_version_2()
    {
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add([1.5, 2.5]);

        Assert.Equal(SketchCodec.FormatVersion, SketchCodec.ToState(sketch).Version);
    }

    [Theory]
    [InlineData("decreasing", "edge_buckets.bounds[1]")]
    [InlineData("short-counts", "edge_buckets.counts has 4 counts for 4 edges")]
    [InlineData("total", "counts disagree")]
    [InlineData("min-outside", "do not hold moments.min")]
    [InlineData("with-log-buckets", "neither quantiles nor log_buckets")]
    [InlineData("version-2", "edge_buckets is a version 3 field")]
    public void Damaged_edge_states_are_refused_naming_the_field(string damage, string message)
    {
        SeriesSketch sketch = EdgeAnswerTests.PointOf([1, 4, 6, 7, 9, 20], [0, 5, 10, 25]).ToSketch(SeriesSketchOptions.Default);
        SeriesSketchState state = SketchCodec.ToState(sketch);
        switch (damage)
        {
            case "decreasing": state.EdgeBuckets.Bounds[1] = -1; break;
            case "short-counts": state.EdgeBuckets.Counts.RemoveAt(4); break;
            case "total": state.EdgeBuckets.Counts[0] = 3; break;
            case "min-outside": state.EdgeBuckets.Counts[1] = 0; state.EdgeBuckets.Counts[2] = 5; break;
            case "with-log-buckets": state.LogBuckets = SketchCodec.ToState(new LogBucketSketch(8, 160)); break;
            case "version-2": state.Version = SketchCodec.FormatVersion; break;
        }

        var refused = Assert.Throws<SketchFormatException>(() => SketchCodec.FromState(state));

        Assert.Contains(message, refused.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_merge_keeps_edge_buckets_through_a_round_trip()
    {
        SeriesSketch a = EdgeAnswerTests.PointOf([1, 4, 6], [0, 5, 10]).ToSketch(SeriesSketchOptions.Default);
        a.Merge(EdgeAnswerTests.PointOf([12, 30], [0, 10, 20, 40]).ToSketch(SeriesSketchOptions.Default));

        SeriesSketch read = SketchCodec.Deserialize(SketchCodec.Serialize(a));

        // Worked by hand: 5 cuts only the second side's empty (0, 10], and 20 and 40 only the first
        // side's empty (10, +∞), so every edge stays (data model: bucket k holds (bounds[k−1], bounds[k]]).
        Assert.Equal([0.0, 5, 10, 20, 40], read.EdgeBuckets!.Edges);
        Assert.Equal([0L, 2, 1, 1, 1, 0], read.EdgeBuckets.Counts);
        Assert.Equal(SketchForm.EdgeBuckets, read.Summarize().Form);
    }
}
