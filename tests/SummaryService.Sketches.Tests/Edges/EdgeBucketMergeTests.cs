using SummaryService.Sketches.Buckets;

namespace SummaryService.Sketches.Tests.Edges;

/// <summary>
/// Edge buckets with different edges merge to the edges that cut no occupied bucket of the other
/// side, so every count moves whole. Bucket k holds (bounds[k−1], bounds[k]] (OpenTelemetry metrics
/// data model, explicit-bounds histograms; reference/otlp-metrics.md "Bucket facts"); the expected
/// counts below are worked by hand from that rule.
/// </summary>
public class EdgeBucketMergeTests
{
    [Fact]
    public void Edges_that_cut_an_occupied_bucket_of_the_other_side_are_dropped_and_counts_move_whole()
    {
        // a: (0, 10] holds 4, (20, 30] holds 3. b: (10, 25] holds 2, (25, +∞) holds 1.
        // 5 cuts a's (0, 10]; 20 cuts b's (10, 25]; 25 cuts a's (20, 30]; 30 cuts b's (25, +∞).
        // Left: 0 (cuts only b's empty (−∞, 5]) and 10 (shared). Worked by hand.
        EdgeBucketSketch a = Sketch([0, 10, 20, 30], [0, 4, 0, 3, 0]);
        EdgeBucketSketch b = Sketch([5, 10, 25], [0, 0, 2, 1]);

        foreach ((EdgeBucketSketch into, EdgeBucketSketch other) in new[] { (a.Clone(), b), (b.Clone(), a) })
        {
            into.Merge(other);

            Assert.Equal([0.0, 10.0], into.Edges);
            Assert.Equal([0L, 4L, 6L], into.Counts);
            Assert.Equal(10, into.Count);
        }
    }

    [Fact]
    public void An_edge_that_cuts_only_empty_buckets_is_kept_so_the_merge_stays_as_fine_as_it_can()
    {
        // a: (0, 10] holds 5; b: (15, +∞) holds 2. 15 cuts a's empty (10, 20], so it stays; 20
        // cuts b's occupied (15, +∞), so it goes. Worked by hand.
        EdgeBucketSketch a = Sketch([0, 10, 20], [0, 5, 0, 0]);
        a.Merge(Sketch([15], [0, 2]));

        Assert.Equal([0.0, 10.0, 15.0], a.Edges);
        Assert.Equal([0L, 5L, 0L, 2L], a.Counts);
    }

    [Fact]
    public void Equal_edges_add_their_counts()
    {
        EdgeBucketSketch a = Sketch([1, 2], [1, 2, 3]);
        a.Merge(Sketch([1, 2], [4, 0, 1]));

        Assert.Equal([5L, 2L, 4L], a.Counts);
        Assert.Equal(11, a.Count);
    }

    [Fact]
    public void Values_count_in_the_bucket_whose_upper_edge_is_at_or_above_them()
    {
        // Data model: bucket k holds (bounds[k−1], bounds[k]], so 5 goes in (0, 5] and 5.5 in (5, 10].
        EdgeBucketSketch a = Sketch([0, 5, 10], [0, 0, 0, 0]);
        a.Add([-3, 0, 5, 5.5, 10, 11]);

        Assert.Equal([2L, 1L, 2L, 1L], a.Counts);
    }

    [Theory]
    [InlineData(new[] { 1.0, double.NaN }, 3, "edges[1] is NaN")]
    [InlineData(new[] { 1.0, 1.0 }, 3, "edges[1] is 1, not above edges[0] 1")]
    [InlineData(new[] { 2.0, 1.0 }, 3, "edges[1] is 1, not above edges[0] 2")]
    [InlineData(new[] { 1.0, 2.0 }, 2, "counts has 2 counts for 2 edges")]
    [InlineData(new[] { double.PositiveInfinity }, 2, "; edges are finite")]
    public void Edges_that_are_not_finite_and_strictly_increasing_or_counts_of_the_wrong_length_are_refused(double[] edges, int counts, string reason)
    {
        string? refused = EdgeBucketSketch.Invalid(edges, new ulong[counts], "edges", "counts");

        Assert.NotNull(refused);
        Assert.Contains(reason, refused, StringComparison.Ordinal);
    }

    internal static EdgeBucketSketch Sketch(double[] edges, long[] counts) =>
        EdgeBucketSketch.Restore(edges, [.. counts.Select(c => (ulong)c)]);
}
