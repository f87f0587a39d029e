using SummaryService.Sketches.Buckets;

namespace SummaryService.Sketches.Tests.Edges;

/// <summary>
/// Two cumulative explicit-bounds points of one stream differ by exactly the values recorded between
/// them (OpenTelemetry metrics data model, "Temporality": a cumulative point covers everything since
/// its start time); a count that went down, or changed edges, cannot be one accumulation.
/// </summary>
public class EdgeHistogramPointTests
{
    private static readonly double[] Bounds = [0, 5, 10, 25];
    private static readonly double[] Earlier = [1, 4, 6, 20];
    private static readonly double[] Between = [0.5, 7, 9];

    [Fact]
    public void The_difference_holds_the_new_values_counts_and_sum_with_a_new_minimum_exact_and_an_old_maximum_bounded()
    {
        EdgeHistogramPoint earlier = EdgeAnswerTests.PointOf(Earlier, Bounds);
        EdgeHistogramPoint later = EdgeAnswerTests.PointOf([.. Earlier, .. Between], Bounds);

        EdgeHistogramPoint difference = later.Since(earlier)!;

        Assert.Equal(EdgeAnswerTests.PointOf(Between, Bounds).Counts, difference.Counts);
        Assert.Equal(3, difference.Count);
        Assert.Equal(16.5, difference.Sum);

        // 0.5 is below the earlier minimum 1: recorded in between, so exact. The maximum 20 was
        // there before: the new values' largest lies in their highest occupied bucket (5, 10], whose
        // upper edge bounds it, and the point says its extremes are bounds.
        Assert.Equal(0.5, difference.Min);
        Assert.Equal(10, difference.Max);
        Assert.False(difference.ExtremesExact);
    }

    [Fact]
    public void A_count_that_went_down_is_a_reset()
    {
        EdgeHistogramPoint earlier = EdgeAnswerTests.PointOf(Earlier, Bounds);
        EdgeHistogramPoint later = EdgeAnswerTests.PointOf([6, 7, 8, 9, 9.5], Bounds);

        Assert.Null(later.Since(earlier));
    }

    [Fact]
    public void Changed_edges_cannot_be_subtracted_and_read_as_a_reset()
    {
        EdgeHistogramPoint earlier = EdgeAnswerTests.PointOf(Earlier, Bounds);
        EdgeHistogramPoint later = EdgeAnswerTests.PointOf([.. Earlier, .. Between], [0, 5, 10, 50]);

        Assert.Null(later.Since(earlier));
    }

    [Fact]
    public void Extremes_outside_their_outermost_buckets_are_named()
    {
        EdgeHistogramPoint point = EdgeAnswerTests.PointOf(Earlier, Bounds) with { Max = 30 };

        Assert.Contains("max 30", point.ExtremesOutsideBuckets(), StringComparison.Ordinal);
        Assert.Null(EdgeAnswerTests.PointOf(Earlier, Bounds).ExtremesOutsideBuckets());
    }
}
