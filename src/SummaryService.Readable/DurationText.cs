using System.Globalization;
using System.Text;

namespace SummaryService.Readable;

/// <summary>
/// The one duration syntax people read and write everywhere — command line, configuration, error
/// messages and logs: a number and a unit, units may follow each other (<c>250ms</c>, <c>90s</c>,
/// <c>15m</c>, <c>6h</c>, <c>7d</c>, <c>1w</c>, <c>1h30m</c>). A bare number is refused rather than
/// guessed, because seconds and minutes are both plausible. Lives with the contract so the server,
/// the client library and the command-line tool print and accept exactly the same form.
/// </summary>
public static class DurationText
{
    /// <summary>The longest duration accepted: ten years, far beyond any retention or window.</summary>
    public static readonly TimeSpan Longest = TimeSpan.FromDays(3650);

    private const string Example = "90s, 15m, 6h, 7d or 1h30m";

    /// <summary>
    /// Parses <paramref name="text"/>, or returns false with a message saying what was wrong. Zero is
    /// refused unless <paramref name="allowZero"/> (a window or a step of nothing is always a mistake;
    /// an interval of 0 can be a setting).
    /// </summary>
    public static bool TryParse(string text, out TimeSpan duration, out string error, bool allowZero = false)
    {
        ArgumentNullException.ThrowIfNull(text);
        duration = TimeSpan.Zero;
        error = "";
        string s = text.Trim();
        if (s.Length == 0)
        {
            error = $"a duration is empty; write it like {Example}.";
            return false;
        }

        int i = 0;
        double totalMs = 0;
        while (i < s.Length)
        {
            int start = i;
            while (i < s.Length && (char.IsAsciiDigit(s[i]) || s[i] == '.'))
            {
                i++;
            }

            if (i == start || !double.TryParse(s.AsSpan(start, i - start), NumberStyles.AllowDecimalPoint, CultureInfo.InvariantCulture, out double amount))
            {
                error = $"'{text}' is not a duration; write it like {Example}.";
                return false;
            }

            int unitStart = i;
            while (i < s.Length && char.IsAsciiLetter(s[i]))
            {
                i++;
            }

            double? unitMs = UnitMs(s[unitStart..i]);
            if (unitMs is null)
            {
                error = unitStart == i
                    ? $"'{text}' lacks a unit; write ms, s, m, h, d or w after the number (e.g. 90s)."
                    : $"'{text}' has the unknown unit '{s[unitStart..i]}'; use ms, s, m, h, d or w.";
                return false;
            }

            totalMs += amount * unitMs.Value;
        }

        if ((totalMs <= 0 && !allowZero) || totalMs > Longest.TotalMilliseconds)
        {
            error = allowZero ? $"'{text}' must be at most {Format(Longest)}." : $"'{text}' must be positive and at most {Format(Longest)}.";
            return false;
        }

        duration = TimeSpan.FromMilliseconds(Math.Round(totalMs, 3));
        return true;
    }

    /// <summary>
    /// The duration in the same syntax, largest units first (<c>1h30m</c>, <c>7d</c>, <c>250ms</c>,
    /// <c>0.5ms</c>), so every printed duration can be typed back as it reads.
    /// </summary>
    public static string Format(TimeSpan duration)
    {
        if (duration == TimeSpan.Zero)
        {
            return "0s";
        }

        if (duration < TimeSpan.Zero)
        {
            return "-" + Format(duration.Duration());
        }

        var parts = new StringBuilder();
        Append(parts, duration.Days, "d");
        Append(parts, duration.Hours, "h");
        Append(parts, duration.Minutes, "m");
        Append(parts, duration.Seconds, "s");
        double ms = (double)(duration.Ticks % TimeSpan.TicksPerSecond) / TimeSpan.TicksPerMillisecond;
        if (ms > 0)
        {
            parts.Append(ms.ToString("0.###", CultureInfo.InvariantCulture)).Append("ms");
        }

        return parts.Length == 0 ? "0s" : parts.ToString();
    }

    private static void Append(StringBuilder parts, int amount, string unit)
    {
        if (amount > 0)
        {
            parts.Append(amount.ToString(CultureInfo.InvariantCulture)).Append(unit);
        }
    }

    private static double? UnitMs(string unit) => unit switch
    {
        "ms" => 1,
        "s" => 1_000,
        "m" => 60_000,
        "h" => 3_600_000,
        "d" => 86_400_000,
        "w" => 604_800_000,
        _ => null,
    };
}
