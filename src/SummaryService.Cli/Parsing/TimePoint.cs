using System.Globalization;
using SummaryService.Readable;

namespace SummaryService.Cli.Parsing;

/// <summary>
/// An instant on the command line: <c>now</c>, <c>now-DURATION</c> (<c>now-2h</c>: two hours ago) or an
/// ISO 8601 time (<c>2026-12-02T01:30:00Z</c>; without an offset it is read as UTC, so a pasted time
/// means the same on every machine). A bare duration is never an instant: everywhere on the command
/// line <c>2h</c> means a length of two hours, so it is refused here with the form that was meant.
/// </summary>
public static class TimePoint
{
    private const string Forms = "now, now-2h (two hours ago) or an ISO 8601 time such as 2026-12-02T01:30:00Z";

    /// <summary>Unix milliseconds of <paramref name="text"/>, relative forms measured back from <paramref name="nowMs"/>.</summary>
    public static bool TryParse(string text, long nowMs, out long unixMs, out string error)
    {
        ArgumentNullException.ThrowIfNull(text);
        unixMs = 0;
        error = "";
        string s = text.Trim();
        if (s.Equals("now", StringComparison.OrdinalIgnoreCase))
        {
            unixMs = nowMs;
            return true;
        }

        if (s.StartsWith("now-", StringComparison.OrdinalIgnoreCase))
        {
            if (DurationText.TryParse(s[4..], out TimeSpan ago, out string durationError))
            {
                unixMs = nowMs - (long)ago.TotalMilliseconds;
                return true;
            }

            error = $"'{text}': {durationError}";
            return false;
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

        error = DurationText.TryParse(s, out _, out _)
            ? $"'{text}' is a length, not an instant; for that long ago write now-{s}."
            : $"'{text}' is not an instant; write {Forms}.";
        return false;
    }

    /// <summary>ISO 8601 in UTC, the form the tool prints and accepts back.</summary>
    public static string Format(long unixMs) => TimeText.Iso(unixMs);
}
