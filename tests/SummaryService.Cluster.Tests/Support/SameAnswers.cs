using SummaryService.Store;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// Checks that two window answers are the same answer: groups, covered span, counts and every
/// figure with its interval. Where a quantile sketch has compacted, the merge order (per partition,
/// then across partitions) picks other survivors, so an estimate may move within its bounds: then
/// each answer's estimate must lie in the other's interval (KLL, Karnin, Lang and Liberty 2016: any
/// merge order keeps the rank guarantee).
/// </summary>
internal static class SameAnswers
{
    public static void Equal(WindowSummary expected, WindowSummary actual)
    {
        Assert.Equal(expected.Covered, actual.Covered);
        Assert.Equal(expected.Groups.Count, actual.Groups.Count);
        for (int g = 0; g < expected.Groups.Count; g++)
        {
            SummarizedGroup one = expected.Groups[g];
            SummarizedGroup other = actual.Groups[g];
            Assert.Equal(one.Labels.OrderBy(l => l.Key), other.Labels.OrderBy(l => l.Key));
            Assert.Equal(one.SeriesMerged, other.SeriesMerged);
            Assert.Equal(one.Summary.Count, other.Summary.Count);
            Assert.Equal(one.Summary.Min, other.Summary.Min);
            Assert.Equal(one.Summary.Max, other.Summary.Max);

            // Whole grams add exactly in any order; the central moments merge pairwise (Chan, Golub &
            // LeVeque 1979) in another grouping, which may move the last bits only.
            Assert.Equal(one.Summary.Sum, other.Summary.Sum);
            Close(one.Summary.Mean, other.Summary.Mean);
            Close(one.Summary.Variance, other.Summary.Variance);
            Assert.Equal(one.Summary.Exact, other.Summary.Exact);
            Assert.Equal(one.Summary.Quantiles.Count, other.Summary.Quantiles.Count);
            for (int q = 0; q < one.Summary.Quantiles.Count; q++)
            {
                var (a, b) = (one.Summary.Quantiles[q], other.Summary.Quantiles[q]);
                if (one.Summary.Exact)
                {
                    Assert.Equal(a, b);
                }
                else
                {
                    Assert.InRange(b.Value, a.Low, a.High);
                    Assert.InRange(a.Value, b.Low, b.High);
                }
            }
        }
    }

    private static void Close(double? expected, double? actual)
    {
        Assert.Equal(expected.HasValue, actual.HasValue);
        if (expected is double one && actual is double other)
        {
            Assert.Equal(one, other, 1e-9 * Math.Abs(one));
        }
    }
}
