using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.Edges;

/// <summary>
/// Summaries of explicit-bounds histogram points: the quantile lies in the bucket where the
/// cumulative count reaches its rank, so the bucket's edges (cut to [min, max]) bound it; merged
/// with raw values or log buckets every interval still holds the true quantile.
/// </summary>
public class EdgeAnswerTests
{
    // The default explicit bucket boundaries of the OpenTelemetry metrics SDK specification
    // ("Explicit Bucket Histogram Aggregation"; from memory, and the .NET SDK's default).
    internal static readonly double[] DefaultBounds = [0, 5, 10, 25, 50, 75, 100, 250, 500, 750, 1000, 2500, 5000, 7500, 10000];

    [Fact]
    public void A_quantile_whose_ranks_share_a_bucket_is_bounded_by_exactly_that_buckets_edges()
    {
        // {1, 4, 6, 7, 9, 20} between edges 0, 5, 10, 25: (0, 5] holds 2, (5, 10] 3, (10, 25] 1.
        SeriesSketch sketch = PointOf([1, 4, 6, 7, 9, 20], [0, 5, 10, 25]).ToSketch(SeriesSketchOptions.Default);

        Summary summary = sketch.Summarize(new SummaryOptions { Quantiles = [0.5, 0.6] });

        // Hyndman & Fan definition 7: the median at h = 3.5 (ranks 3 and 4), q = 0.6 at rank 4, all
        // in (5, 10]; the interval is that bucket's edges, the source the edges.
        foreach (QuantileEstimate q in summary.Quantiles)
        {
            Assert.Equal(5, q.Low);
            Assert.Equal(10, q.High);
            Assert.Equal(BoundSource.Edges, q.LowSource);
            Assert.Equal(BoundSource.Edges, q.HighSource);
        }

        Assert.Equal(SketchForm.EdgeBuckets, summary.Form);
        Assert.Null(summary.Variance);
        Assert.Equal(47, summary.Sum);
        Assert.Equal(1, summary.Min);
        Assert.Equal(20, summary.Max);
    }

    [Theory]
    [InlineData(40)]
    [InlineData(5000)]
    public void Merged_with_raw_values_every_interval_holds_the_true_quantile_of_all_values(int rawCount)
    {
        // Raw values few enough to be held (40) are counted between the edges exactly; many (5000)
        // join as log buckets, merged without splitting a count.
        var random = new Random(22);
        double[] exported = [.. Enumerable.Range(0, 3000).Select(_ => Math.Round(Math.Exp(3 + random.NextDouble() * 4), 2))];
        double[] raw = [.. Enumerable.Range(0, rawCount).Select(_ => Math.Round(random.NextDouble() * 900, 2))];
        double[] all = [.. exported.Concat(raw).Order()];
        SeriesSketch edges = PointOf(exported, DefaultBounds).ToSketch(SeriesSketchOptions.Default);
        var values = new SeriesSketch(seed: 7);
        values.Add(raw);

        foreach ((SeriesSketch into, SeriesSketch other) in new[] { (edges.Clone(), values), (values.Clone(), edges) })
        {
            into.Merge(other);
            Summary summary = into.Summarize(new SummaryOptions { Quantiles = [0, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999, 1] });

            Assert.Equal(SketchForm.EdgeBuckets, summary.Form);
            Assert.Equal(all.Length, summary.Count);
            Assert.Equal(all[0], summary.Min);
            Assert.Equal(all[^1], summary.Max);
            foreach (QuantileEstimate q in summary.Quantiles)
            {
                // Reference: Hyndman & Fan (1996) definition 7 through MathNet.Numerics.
                double truth = SortedArrayStatistics.QuantileCustom(all, q.Q, QuantileDefinition.R7);
                Assert.True(q.Low <= truth && truth <= q.High, $"q={q.Q}: true {truth} outside [{q.Low}, {q.High}]");
            }

            // Ranks: the share at or below 300, from MathNet's empirical CDF.
            RankEstimate rank = into.Summarize(new SummaryOptions { RankOf = [300] }).Ranks.Single();
            double share = Statistics.EmpiricalCDF(all, 300);
            Assert.True(rank.Low <= share && share <= rank.High, $"share {share} outside [{rank.Low}, {rank.High}]");
        }
    }

    /// <summary>An exported point of the values: each counted in the first bucket whose upper edge is at or above it (data model).</summary>
    internal static EdgeHistogramPoint PointOf(double[] values, double[] bounds)
    {
        var counts = new ulong[bounds.Length + 1];
        foreach (double v in values)
        {
            int k = 0;
            while (k < bounds.Length && v > bounds[k])
            {
                k++;
            }

            counts[k]++;
        }

        return new EdgeHistogramPoint(bounds, counts, values.Length, values.Sum(), values.Min(), values.Max());
    }
}
