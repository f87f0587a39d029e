using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>How a split treats small groups, empty ones, ratios and repeated questions.</summary>
public class SplitShapeTests
{
    [Fact]
    public void A_group_too_small_to_bound_the_ranked_quantile_is_listed_apart_and_never_called()
    {
        // 40 values cannot bound a population p99 at 99% (it takes about a thousand), however far
        // they lie from the rest: all forty are ten times the rest's largest value here.
        StandoutInput[] groups =
        [
            Group("big-a", TestData.LogNormal(20_000, seed: 1, mu: 4, sigma: 0.5), 1),
            Group("big-b", TestData.LogNormal(20_000, seed: 2, mu: 4, sigma: 0.5), 2),
            Group("tiny", [.. Enumerable.Range(0, 40).Select(i => 10_000.0 + i)], 3),
        ];

        StandoutRanking answer = SplitComparison.Rank(groups, null, 0, new StandoutOptions { Measure = StandoutMeasure.QuantileShift, MeasureQuantile = 0.99 });

        StandoutGroup tiny = Assert.Single(answer.Unranked);
        Assert.Equal("tiny", tiny.Value);
        Assert.Equal(StandoutStanding.TooSmall, tiny.Standing);
        Assert.False(tiny.Significant);
        Assert.False(tiny.Quantiles[2].Bounded);
        Assert.False(tiny.Quantiles[2].Shift.Significant);
        Assert.True(tiny.Quantiles[0].Shift.Significant); // 40 values do bound a median, and it is far away
        Assert.Equal(["big-a", "big-b"], answer.Ranked.Select(g => g.Value).Order());
    }

    [Fact]
    public void By_distance_even_a_small_group_far_away_is_ranked_first_and_called()
    {
        StandoutInput[] groups =
        [
            Group("big-a", TestData.LogNormal(20_000, seed: 1, mu: 4, sigma: 0.5), 1),
            Group("big-b", TestData.LogNormal(20_000, seed: 2, mu: 4, sigma: 0.5), 2),
            Group("tiny", [.. Enumerable.Range(0, 40).Select(i => 10_000.0 + i)], 3),
            Group("pair", [1, 2], 4),
        ];

        StandoutRanking answer = SplitComparison.Rank(groups, null, 0, new StandoutOptions());

        Assert.Equal("tiny", answer.Ranked[0].Value);
        Assert.True(answer.Ranked[0].Significant);
        Assert.Equal(1, answer.Ranked[0].Distance!.Value.Low, 6);

        // Two values: even a distance of 1 could be chance (the limit exceeds 1).
        StandoutGroup pair = Assert.Single(answer.Unranked);
        Assert.Equal(StandoutStanding.TooSmall, pair.Standing);
    }

    [Fact]
    public void A_group_with_no_values_in_the_window_is_too_small_and_carries_no_figures()
    {
        StandoutInput[] groups =
        [
            Group("a", TestData.LogNormal(5000, seed: 1), 1),
            Group("b", TestData.LogNormal(5000, seed: 2), 2),
            new StandoutInput("quiet", new SeriesSketch(seed: 3), 1),
        ];

        StandoutGroup quiet = Assert.Single(SplitComparison.Rank(groups, null, 0, new StandoutOptions()).Unranked);

        Assert.Equal(0, quiet.Count);
        Assert.Equal(10_000, quiet.RestCount);
        Assert.Empty(quiet.Quantiles);
        Assert.Null(quiet.Distance);
        Assert.Null(quiet.Mean);
    }

    [Fact]
    public void Ranking_by_ratio_needs_positive_quantiles()
    {
        StandoutInput[] groups =
        [
            Group("below", TestData.Normal(5000, seed: 1, mean: -50, sd: 5), 1),
            Group("above", TestData.Normal(5000, seed: 2, mean: 50, sd: 5), 2),
        ];

        StandoutRanking answer = SplitComparison.Rank(groups, null, 0, new StandoutOptions { Measure = StandoutMeasure.QuantileRatio, MeasureQuantile = 0.5 });

        Assert.Empty(answer.Ranked);
        Assert.All(answer.Unranked, g => Assert.Equal(StandoutStanding.NoRatio, g.Standing));
        Assert.All(answer.Unranked, g => Assert.True(g.Quantiles[1].Shift.Significant)); // the shift is still judged
    }

    [Fact]
    public void The_same_groups_give_the_same_answer_bit_for_bit()
    {
        StandoutInput[] Fleet() => [.. Enumerable.Range(0, 12).Select(h => Group($"h{h}", TestData.LogNormal(3000, seed: 40 + h, mu: 4, sigma: 0.6), (ulong)h + 1))];

        StandoutRanking first = SplitComparison.Rank(Fleet(), null, 0, new StandoutOptions());
        StandoutRanking second = SplitComparison.Rank(Fleet(), null, 0, new StandoutOptions());

        Assert.Equal(first.Ranked.Select(g => g.Value), second.Ranked.Select(g => g.Value));
        Assert.Equal(
            first.Ranked.SelectMany(g => g.Quantiles.SelectMany(q => new[] { q.Shift.A.Low, q.Shift.A.High, q.Shift.B.Low, q.Shift.B.High })),
            second.Ranked.SelectMany(g => g.Quantiles.SelectMany(q => new[] { q.Shift.A.Low, q.Shift.A.High, q.Shift.B.Low, q.Shift.B.High })));
    }

    [Fact]
    public void Each_rest_holds_exactly_the_other_groups_and_the_shared_values()
    {
        double[][] values = [.. Enumerable.Range(0, 7).Select(h => TestData.LogNormal(400 + (100 * h), seed: 60 + h))];
        StandoutInput[] groups = [.. values.Select((v, h) => Group($"g{h}", v, (ulong)h + 1))];
        double[] shared = TestData.LogNormal(250, seed: 70);
        var sharedSketch = new SeriesSketch(seed: 9);
        sharedSketch.Add(shared);

        StandoutRanking answer = SplitComparison.Rank(groups, sharedSketch, 2, new StandoutOptions());

        foreach (StandoutGroup group in answer.Ranked)
        {
            int h = int.Parse(group.Value[1..], System.Globalization.CultureInfo.InvariantCulture);
            double[] rest = [.. values.Where((_, i) => i != h).SelectMany(v => v), .. shared];
            Assert.Equal(rest.Length, group.RestCount);
            Assert.Equal(6 + 2, group.RestSeries);
            Assert.Equal(rest.Average(), group.Mean!.Value.A, 1e-9 * rest.Average()); // moments merge exactly (Pébay 2008)
        }
    }

    private static StandoutInput Group(string value, double[] values, ulong seed)
    {
        var sketch = new SeriesSketch(seed: seed);
        sketch.Add(values);
        return new StandoutInput(value, sketch, 1);
    }
}
