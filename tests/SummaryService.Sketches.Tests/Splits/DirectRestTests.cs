using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>
/// The rests built from prefix and suffix merges against each rest merged directly from the other
/// groups, one by one: the same values, and the same verdicts by the same rule as Compare.
/// </summary>
public class DirectRestTests
{
    [Fact]
    public void Exact_groups_get_exactly_the_shifts_and_distance_compare_gives_against_the_directly_merged_rest()
    {
        // 30 values per group and 5 groups: 120 values in every rest, under the point where the
        // sketches start to compact, so both ways of merging hold the same values exactly.
        StandoutInput[] groups = [.. Enumerable.Range(0, 5).Select(g => Group($"dock-{g}", TestData.LogNormal(30, seed: 300 + g, mu: 3 + (0.2 * g), sigma: 0.4), (ulong)g + 1))];
        var options = new StandoutOptions { Quantiles = [0.25, 0.5, 0.75] };

        StandoutRanking answer = SplitComparison.Rank(groups, null, 0, options);

        foreach (StandoutGroup group in answer.Ranked.Concat(answer.Unranked))
        {
            StandoutInput own = groups.Single(g => g.Value == group.Value);
            SeriesSketch rest = DirectRest(groups, own);
            for (int q = 0; q < options.Quantiles.Count; q++)
            {
                // Compare's own call with a = the rest, b = the group.
                Assert.Equal(SketchComparison.Shift(rest, own.Sketch, options.Quantiles[q], options.Confidence), group.Quantiles[q].Shift);
            }

            var (distance, low, high) = SketchComparison.KolmogorovSmirnov(rest, own.Sketch, options.Confidence);
            Assert.Equal(new DistanceVerdict(distance, low, high, SketchComparison.SameDistributionLimit(rest.Count, own.Sketch.Count, options.Confidence)), group.Distance);
        }
    }

    [Fact]
    public void Compacted_rests_hold_the_same_values_and_agree_with_the_direct_merge_within_their_intervals()
    {
        StandoutInput[] groups = [.. Enumerable.Range(0, 9).Select(g => Group($"hub-{g}", TestData.LogNormal(6000 + (500 * g), seed: 400 + g, mu: 4, sigma: 0.5 + (0.05 * g)), (ulong)g + 1))];
        double[][] raw = [.. Enumerable.Range(0, 9).Select(g => TestData.LogNormal(6000 + (500 * g), seed: 400 + g, mu: 4, sigma: 0.5 + (0.05 * g)))];
        var options = new StandoutOptions { Quantiles = [0.1, 0.5, 0.9, 0.99] };

        StandoutRanking answer = SplitComparison.Rank(groups, null, 0, options);

        foreach (StandoutGroup group in answer.Ranked)
        {
            int index = Array.FindIndex(groups, g => g.Value == group.Value);
            StandoutInput own = groups[index];
            SeriesSketch rest = DirectRest(groups, own);
            double[] restValues = [.. raw.Where((_, i) => i != index).SelectMany(v => v)];
            Array.Sort(restValues);
            Assert.Equal(rest.Count, group.RestCount);
            Assert.Equal(rest.Moments.Mean, group.Mean!.Value.A, 1e-9 * rest.Moments.Mean); // moments merge exactly in any order (Pébay 2008)
            for (int q = 0; q < options.Quantiles.Count; q++)
            {
                QuantileEstimate direct = SketchComparison.PopulationQuantile(rest, options.Quantiles[q], options.Confidence);
                QuantileEstimate split = group.Quantiles[q].Shift.A;

                // Both intervals hold the rest's sample quantile (Hyndman & Fan definition 7, MathNet R7), so they overlap.
                double sample = SortedArrayStatistics.QuantileCustom(restValues, options.Quantiles[q], QuantileDefinition.R7);
                Assert.InRange(sample, direct.Low, direct.High);
                Assert.InRange(sample, split.Low, split.High);
            }
        }
    }

    private static SeriesSketch DirectRest(StandoutInput[] groups, StandoutInput own)
    {
        var rest = new SeriesSketch(groups[0].Sketch.Options, seed: 7);
        foreach (StandoutInput other in groups.Where(g => g != own))
        {
            rest.Merge(other.Sketch);
        }

        return rest;
    }

    private static StandoutInput Group(string value, double[] values, ulong seed)
    {
        var sketch = new SeriesSketch(seed: seed);
        sketch.Add(values);
        return new StandoutInput(value, sketch, 1);
    }
}
