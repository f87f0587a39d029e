using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Parsing;

/// <summary>
/// A window on the command line: a duration alone is the trailing window of that length ending at
/// the server's now (<c>1h</c>); <c>FROM..TO</c> is a half-open range whose ends are any
/// <see cref="TimePoint"/> (<c>now-3h..now-1h</c>, <c>2026-12-02T01:00:00Z..now</c>).
/// </summary>
public static class WindowText
{
    /// <summary>Parses a window, measuring relative ends back from <paramref name="nowMs"/>.</summary>
    public static bool TryParse(string text, long nowMs, out Window window, out string error)
    {
        ArgumentNullException.ThrowIfNull(text);
        window = new Window();
        string s = text.Trim();
        int dots = s.IndexOf("..", StringComparison.Ordinal);
        if (dots < 0)
        {
            if (DurationText.TryParse(s, out TimeSpan last, out error))
            {
                window = Windows.Last(last);
                return true;
            }

            error = $"'{text}' is not a window; give a length (1h, the last hour) or FROM..TO (now-3h..now-1h, 2026-12-02T01:00:00Z..now).";
            return false;
        }

        if (!TimePoint.TryParse(s[..dots], nowMs, out long from, out error) || !TimePoint.TryParse(s[(dots + 2)..], nowMs, out long to, out error))
        {
            return false;
        }

        return Windows.TryRange(from, to, text, out window, out error);
    }
}
