namespace SummaryService.Client.Recording;

/// <summary>
/// Exponential back-off with jitter: the n-th consecutive failure waits a random time in
/// [d/2, d] with d = min(max, initial · 2^(n−1)), so many producers cut off by one outage do not
/// reconnect in lock-step (the "equal jitter" scheme; common practice).
/// </summary>
internal sealed class Backoff(TimeSpan initial, TimeSpan max, Random random)
{
    private int _failures;

    /// <summary>Consecutive failures since the last success.</summary>
    public int Failures => _failures;

    /// <summary>Forgets earlier failures after a call got through.</summary>
    public void Succeeded() => _failures = 0;

    /// <summary>The pause before the next attempt, counting this failure.</summary>
    public TimeSpan NextDelay()
    {
        _failures = Math.Min(_failures + 1, 62);
        double ceiling = Math.Min(max.TotalMilliseconds, initial.TotalMilliseconds * Math.Pow(2, _failures - 1));
        double jittered = (ceiling / 2) + (random.NextDouble() * ceiling / 2);
        return TimeSpan.FromMilliseconds(jittered);
    }
}
