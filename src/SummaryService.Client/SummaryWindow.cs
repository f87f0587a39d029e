using Google.Protobuf.WellKnownTypes;
using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>
/// A query's time span: the trailing interval ending at the server's "now", or an explicit
/// half-open range. Kept as a small value so call sites read as <c>SummaryWindow.Last(TimeSpan.FromHours(1))</c>.
/// </summary>
public readonly record struct SummaryWindow
{
    private SummaryWindow(TimeSpan? last, DateTimeOffset from, DateTimeOffset to)
    {
        LastDuration = last;
        From = from;
        To = to;
    }

    /// <summary>The trailing length, or null for an explicit range.</summary>
    public TimeSpan? LastDuration { get; }

    /// <summary>Inclusive start of an explicit range.</summary>
    public DateTimeOffset From { get; }

    /// <summary>Exclusive end of an explicit range.</summary>
    public DateTimeOffset To { get; }

    /// <summary>The trailing <paramref name="duration"/> measured back from the server's clock.</summary>
    public static SummaryWindow Last(TimeSpan duration)
    {
        ArgumentOutOfRangeException.ThrowIfLessThanOrEqual(duration, TimeSpan.Zero);
        return new SummaryWindow(duration, default, default);
    }

    /// <summary>The half-open range [<paramref name="from"/>, <paramref name="to"/>), to the millisecond.</summary>
    public static SummaryWindow Between(DateTimeOffset from, DateTimeOffset to)
    {
        if (from >= to)
        {
            throw new ArgumentOutOfRangeException(nameof(to), to, $"to must be after from ({from:O}); windows are half-open [from, to).");
        }

        return new SummaryWindow(null, from, to);
    }

    /// <summary>The contract form.</summary>
    public Window ToContract() => LastDuration is { } last
        ? new Window { Last = Duration.FromTimeSpan(last) }
        : new Window { Range = new Contract.V1.TimeRange { FromUnixMs = From.ToUnixTimeMilliseconds(), ToUnixMs = To.ToUnixTimeMilliseconds() } };
}
