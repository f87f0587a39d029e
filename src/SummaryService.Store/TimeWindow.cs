namespace SummaryService.Store;

/// <summary>Half-open interval [<see cref="FromUnixMs"/>, <see cref="ToUnixMs"/>) in Unix milliseconds.</summary>
public readonly record struct TimeWindow(long FromUnixMs, long ToUnixMs)
{
    /// <summary>Length in milliseconds.</summary>
    public long Length => ToUnixMs - FromUnixMs;

    /// <summary>True when the two intervals share at least one millisecond.</summary>
    public bool Overlaps(TimeWindow other) => FromUnixMs < other.ToUnixMs && other.FromUnixMs < ToUnixMs;

    /// <summary>True when <paramref name="unixMs"/> lies inside.</summary>
    public bool Contains(long unixMs) => unixMs >= FromUnixMs && unixMs < ToUnixMs;
}
