using System.Globalization;

namespace SummaryService.Cli.Parsing;

/// <summary>
/// An instant on the command line: <c>now</c>, an ISO 8601 time (<c>2026-12-02T01:30:00Z</c>; without an
/// offset it is read as UTC, so a pasted time means the same on every machine), or a duration meaning
/// that long ago (<c>2h</c>).
/// </summary>
public static class TimePoint
{
    /// <summary>Unix milliseconds of <paramref name="text"/>, relative forms measured back from <paramref name="nowMs"/>.</summary>
    public static bool TryParse(string text, long nowMs, out long unixMs, out string error)
    {
        unixMs = 0;
        error = "";
        string s = text.Trim();
        if (s.Equals("now", StringComparison.OrdinalIgnoreCase))
        {
            unixMs = nowMs;
            return true;
        }

        if (s.Length > 0 && char.IsAsciiDigit(s[0]) && s.Contains('-', StringComparison.Ordinal))
        {
            if (DateTimeOffset.TryParse(s, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal, out DateTimeOffset at))
            {
                unixMs = at.ToUnixTimeMilliseconds();
                return true;
            }

            error = $"'{text}' is not an ISO 8601 time; write it like 2026-12-02T01:30:00Z.";
            return false;
        }

        if (DurationText.TryParse(s, out TimeSpan ago, out _))
        {
            unixMs = nowMs - (long)ago.TotalMilliseconds;
            return true;
        }

        error = $"'{text}' is neither 'now', an ISO 8601 time (2026-12-02T01:30:00Z) nor a duration ago (2h).";
        return false;
    }

    /// <summary>ISO 8601 in UTC to the second, the form the tool prints and accepts back.</summary>
    public static string Format(long unixMs) =>
        DateTimeOffset.FromUnixTimeMilliseconds(unixMs).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture);
}
