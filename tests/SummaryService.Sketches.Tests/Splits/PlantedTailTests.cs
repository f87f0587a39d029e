using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Quantiles;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>
/// 50 hosts from one distribution and 2 whose tail is 1.5× heavier: split by host, the two come
/// first with significant verdicts and none of the others is called; over seeded fleets, false
/// calls stay within what the confidence allows.
/// </summary>
public class PlantedTailTests
{
    private static readonly StandoutOptions ByP99Ratio = new() { Measure = StandoutMeasure.QuantileRatio, MeasureQuantile = 0.99 };

    [Theory]
    [InlineData(StandoutMeasure.QuantileRatio)]
    [InlineData(StandoutMeasure.QuantileShift)]
    [InlineData(StandoutMeasure.Distance)]
    public void The_two_heavy_tailed_hosts_come_first_and_are_the_only_ones_called(StandoutMeasure measure)
    {
        var (groups, heavy) = PlantedHosts.Fleet(trial: 0, hosts: 52, 17, 41);

        StandoutRanking answer = SplitComparison.Rank(groups, null, 0, ByP99Ratio with { Measure = measure });

        Assert.Equal(52, answer.Ranked.Count);
        Assert.Empty(answer.Unranked);
        Assert.Equal(heavy.Order(), answer.Ranked.Take(2).Select(g => g.Value).Order());
        Assert.All(answer.Ranked.Take(2), g => Assert.True(g.Significant, $"{g.Value} not called: {Describe(g)}"));
        Assert.All(answer.Ranked.Skip(2), g => Assert.False(g.Significant, $"{g.Value} called: {Describe(g)}"));
    }

    [Fact]
    public void The_heavy_hosts_p99_is_about_one_and_a_half_times_the_rests_and_their_median_is_not_called()
    {
        var (groups, _) = PlantedHosts.Fleet(trial: 0, hosts: 52, 17, 41);

        StandoutGroup first = SplitComparison.Rank(groups, null, 0, ByP99Ratio).Ranked[0];

        StandoutQuantile median = first.Quantiles[0];
        StandoutQuantile p99 = first.Quantiles[2];
        Assert.False(median.Shift.Significant, Describe(first)); // below the base's p95 nothing moved
        Assert.True(p99.Shift.Significant);
        // The rest holds one heavy host among 51, so its p99 sits a little above the base's; the
        // ratio's interval must hold 1.5 / (that small excess) and lie above 1.
        Assert.InRange(p99.Ratio!.Value, 1.3, 1.6);
        Assert.True(p99.RatioLow > 1.2, Describe(first));
        Assert.Equal(51, first.RestSeries);
        Assert.Equal(51L * PlantedHosts.PerHost, first.RestCount);
    }

    [Fact]
    [Trait("Duration", "Long")]
    public void Over_seeded_fleets_hosts_of_the_common_distribution_are_called_no_more_often_than_the_confidence_allows()
    {
        const int Trials = 30;
        var options = ByP99Ratio;
        int verdicts = 0;
        int quantileCalls = 0;
        int distanceCalls = 0;
        int missedHeavy = 0;
        for (int trial = 1; trial <= Trials; trial++)
        {
            var (groups, heavy) = PlantedHosts.Fleet(trial, hosts: 52, trial % 52, (trial * 7 + 3) % 52);
            StandoutRanking answer = SplitComparison.Rank(groups, null, 0, options);
            foreach (StandoutGroup group in answer.Ranked)
            {
                if (heavy.Contains(group.Value))
                {
                    missedHeavy += group.Significant ? 0 : 1;
                    continue;
                }

                verdicts++;
                quantileCalls += group.Significant ? 1 : 0;
                distanceCalls += group.Distance!.Value.Significant ? 1 : 0;
            }
        }

        // A false verdict needs one of two statements that each hold at the confidence to fail: at
        // most 2δ per host (binomial allowance at the 0.1% level, QuantileTrialCounter).
        int allowed = QuantileTrialCounter.AllowedMisses(verdicts, 2 * (1 - options.Confidence));
        Assert.True(quantileCalls <= allowed, $"{quantileCalls} of {verdicts} common hosts called at p99 (allowed {allowed})");
        Assert.True(distanceCalls <= allowed, $"{distanceCalls} of {verdicts} common hosts called by distance (allowed {allowed})");
        Assert.Equal(0, missedHeavy);
    }

    internal static string Describe(StandoutGroup g) =>
        $"n {g.Count}, " + string.Join("; ", g.Quantiles.Select(q => $"q{q.Shift.Q}: rest {q.Shift.A.Value:F1} [{q.Shift.A.Low:F1}, {q.Shift.A.High:F1}] group {q.Shift.B.Value:F1} [{q.Shift.B.Low:F1}, {q.Shift.B.High:F1}] {(q.Shift.Significant ? "called" : "")}"))
        + $"; KS {g.Distance?.Distance:F4} [{g.Distance?.Low:F4}, {g.Distance?.High:F4}] limit {g.Distance?.Limit:F4}";
}
