namespace SummaryService.Client.Tests.Support;

/// <summary>
/// Waits for a state the test can observe instead of sleeping and hoping: the check is re-read
/// every 20 ms and the wait fails (cancelled) once <c>limit</c> has passed without it holding.
/// </summary>
internal static class Condition
{
    public static async Task WaitUntilAsync(Func<Task<bool>> condition, TimeSpan limit)
    {
        using var timeout = new CancellationTokenSource(limit);
        while (!await condition())
        {
            await Task.Delay(20, timeout.Token);
        }
    }

    public static async Task WaitUntilAsync(Func<bool> condition, TimeSpan limit) =>
        await WaitUntilAsync(() => Task.FromResult(condition()), limit);
}
