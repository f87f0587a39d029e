namespace SummaryService.Store.Tests;

/// <summary>Resolved times are kept as runs of equal neighbours, in value order.</summary>
public class TimeRunTests
{
    [Fact]
    public void Equal_neighbours_join_and_a_time_that_comes_back_starts_a_new_run()
    {
        long[] times = [5, 5, 7, 5, 5, 5, 9];

        Assert.Equal([new TimeRun(5, 2), new TimeRun(7, 1), new TimeRun(5, 3), new TimeRun(9, 1)], TimeRun.Of(times));
        Assert.Equal(times.Length, TimeRun.Of(times).Sum(r => r.Count));
    }

    [Fact]
    public void No_times_make_no_runs() => Assert.Empty(TimeRun.Of([]));

    [Fact]
    public void A_run_of_zero_times_joins_the_run_of_now_and_a_refused_run_is_named_by_its_first_value()
    {
        long now = 1_800_000_000_000;
        var validator = new BatchValidator(new StoreOptions { Tiers = StoreFixture.SmallTiers });
        var batch = new SeriesBatch { Metric = "otterbyte.sort_ms", Values = new double[6], ValueTimesUnixMs = new long[] { now - 5, 0, 0, now, now, 0 } };

        Assert.Equal([new TimeRun(now - 5, 1), new TimeRun(now, 5)], validator.Validate(batch, now));

        long farAhead = now + (long)TimeSpan.FromDays(365).TotalMilliseconds;
        var error = Assert.Throws<StoreRejectedException>(() => validator.Validate(batch with { ValueTimesUnixMs = new long[] { now, now, farAhead, farAhead, farAhead, now } }, now));
        Assert.Equal("value_times_unix_ms[2]", error.Field);
    }
}
