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
}
