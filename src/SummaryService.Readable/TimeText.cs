using System.Globalization;

namespace SummaryService.Readable;

/// <summary>
/// Instants as people read them: ISO 8601 in UTC, and in error messages and logs the Unix milliseconds
/// beside it — the ISO form to read, the number to compare with what a program sent.
/// </summary>
public static class TimeText
{
    /// <summary>ISO 8601 in UTC (<c>2026-12-02T01:30:00Z</c>), with milliseconds only when there are any.</summary>
    public static string Iso(long unixMs)
    {
        if (unixMs < DateTimeOffset.MinValue.ToUnixTimeMilliseconds() || unixMs > DateTimeOffset.MaxValue.ToUnixTimeMilliseconds())
        {
            return $"(out of range: {unixMs.ToString(CultureInfo.InvariantCulture)})";
        }

        DateTime utc = DateTimeOffset.FromUnixTimeMilliseconds(unixMs).UtcDateTime;
        return utc.ToString(utc.Millisecond == 0 ? "yyyy-MM-dd'T'HH:mm:ss'Z'" : "yyyy-MM-dd'T'HH:mm:ss.fff'Z'", CultureInfo.InvariantCulture);
    }

    /// <summary>ISO 8601 UTC with the Unix milliseconds beside it: <c>2026-12-02T01:30:00Z (Unix ms 1796175000000)</c>.</summary>
    public static string IsoAndUnixMs(long unixMs) => $"{Iso(unixMs)} (Unix ms {unixMs.ToString(CultureInfo.InvariantCulture)})";
}
