namespace SummaryService.Client.Tests.Support;

/// <summary>A wall clock the test sets, so values can be recorded "at" chosen past instants; timers and delays stay real.</summary>
internal sealed class SettableClock(DateTimeOffset now) : TimeProvider
{
    private long _ticks = now.UtcTicks;

    public DateTimeOffset Now
    {
        get => new(Interlocked.Read(ref _ticks), TimeSpan.Zero);
        set => Interlocked.Exchange(ref _ticks, value.UtcTicks);
    }

    public override DateTimeOffset GetUtcNow() => Now;
}
