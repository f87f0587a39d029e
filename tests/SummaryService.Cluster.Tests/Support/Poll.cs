namespace SummaryService.Cluster.Tests.Support;

/// <summary>Bounded waits for a condition: polled every quarter second, failing with what was awaited once the limit passes.</summary>
internal static class Poll
{
    private static readonly TimeSpan Interval = TimeSpan.FromMilliseconds(250);

    public static async Task UntilAsync(Func<Task<bool>> condition, TimeSpan limit, string what)
    {
        var deadline = DateTime.UtcNow + limit;
        while (!await condition())
        {
            Assert.True(DateTime.UtcNow < deadline, $"not reached within {limit}: {what}");
            await Task.Delay(Interval);
        }
    }
}
