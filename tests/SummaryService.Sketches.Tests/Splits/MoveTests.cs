using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>
/// With an earlier window, groups rank by how much each moved against how much its rest moved: a
/// host whose tail grew while the fleet held still comes first, and a change every host made
/// alike (a fleet-wide deploy) calls none of them.
/// </summary>
public class MoveTests
{
    private const int Hosts = 24;

    [Theory]
    [InlineData(StandoutMeasure.QuantileRatio)]
    [InlineData(StandoutMeasure.QuantileShift)]
    public void A_host_whose_tail_grew_while_the_rest_held_still_comes_first_and_alone_is_called(StandoutMeasure measure)
    {
        var (before, _) = PlantedHosts.Fleet(trial: 11, hosts: Hosts);
        var (after, heavy) = PlantedHosts.Fleet(trial: 12, hosts: Hosts, 5);

        StandoutRanking answer = SplitComparison.Rank(after, null, 0, Options(measure), new StandoutBaseline(before, null, 0));

        Assert.Equal(Hosts, answer.Ranked.Count);
        StandoutGroup first = answer.Ranked[0];
        Assert.Equal(heavy[0], first.Value);
        Assert.True(first.Significant, PlantedTailTests.Describe(first));
        Assert.All(answer.Ranked.Skip(1), g => Assert.False(g.Significant, $"{g.Value} called"));
        StandoutMove move = first.Move!;
        Assert.Equal(PlantedHosts.PerHost, move.CountBefore);
        Assert.Equal((Hosts - 1) * PlantedHosts.PerHost, move.RestCountBefore);
        Assert.Equal(Hosts - 1, move.RestSeriesBefore);

        // The planted host's p99 grew by half; its rest's by about 1/23 of that.
        QuantileMove p99 = move.Quantiles[2];
        Assert.InRange(p99.LogRatioExcess!.Value, Math.Log(1.3), Math.Log(1.6));
    }

    [Fact]
    public void By_distance_the_grown_tail_ranks_first_but_is_too_slight_a_move_to_call()
    {
        var (before, _) = PlantedHosts.Fleet(trial: 11, hosts: Hosts);
        var (after, heavy) = PlantedHosts.Fleet(trial: 12, hosts: Hosts, 5);

        StandoutGroup first = SplitComparison.Rank(after, null, 0, Options(StandoutMeasure.Distance), new StandoutBaseline(before, null, 0)).Ranked[0];

        // Only the top 5% of the host's values moved, so its two windows lie about 0.05 apart; two
        // windows of 4000 values of one distribution may lie up to 2·sqrt(ln(4/δ)/(2·4000)) ≈ 0.055
        // apart (DKW with Massart's constant, Massart 1990), so no verdict is possible, only the rank.
        Assert.Equal(heavy[0], first.Value);
        Assert.InRange(first.Move!.GroupDistance!.Value.Distance, 0.04, 0.06);
        Assert.True(first.Move.GroupDistance.Value.Limit > 0.05);
        Assert.False(first.Significant);
    }

    [Theory]
    [InlineData(StandoutMeasure.QuantileRatio)]
    [InlineData(StandoutMeasure.Distance)]
    public void A_change_every_host_made_alike_calls_none_of_them(StandoutMeasure measure)
    {
        var (before, _) = PlantedHosts.Fleet(trial: 13, hosts: Hosts);
        var (after, _) = PlantedHosts.Fleet(trial: 14, hosts: Hosts, [.. Enumerable.Range(0, Hosts)]);

        StandoutRanking moved = SplitComparison.Rank(after, null, 0, Options(measure), new StandoutBaseline(before, null, 0));

        Assert.All(moved.Ranked, g => Assert.False(g.Significant, $"{g.Value} called although every host moved alike"));

        // Each host's own tail did move: every group's p99 shift from before to after is significant.
        Assert.All(moved.Ranked, g => Assert.True(g.Move!.Quantiles[2].Group.Significant));
    }

    [Fact]
    public void A_host_only_one_window_holds_is_listed_as_too_small()
    {
        var (before, _) = PlantedHosts.Fleet(trial: 15, hosts: 6);
        var (after, _) = PlantedHosts.Fleet(trial: 16, hosts: 5);

        StandoutRanking answer = SplitComparison.Rank(after, null, 0, Options(StandoutMeasure.Distance), new StandoutBaseline(before, null, 0));

        StandoutGroup gone = Assert.Single(answer.Unranked);
        Assert.Equal(PlantedHosts.Name(5), gone.Value);
        Assert.Equal(0, gone.Count);
        Assert.Equal(PlantedHosts.PerHost, gone.Move!.CountBefore);
        Assert.Equal(StandoutStanding.TooSmall, gone.Standing);
    }

    private static StandoutOptions Options(StandoutMeasure measure) => new() { Measure = measure, MeasureQuantile = 0.99 };
}
