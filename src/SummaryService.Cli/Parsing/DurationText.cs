using System.Globalization;

namespace SummaryService.Cli.Parsing;

/// <summary>
/// Durations as people type them: a number and a unit, possibly several in a row
/// (<c>90s</c>, <c>15m</c>, <c>6h</c>, <c>7d</c>, <c>1h30m</c>, <c>250ms</c>). A bare number is refused
/// rather than guessed, because seconds and minutes are both plausible.
/// </summary>
public static class DurationText
{
    /// <summary>Parses <paramref name="text"/>, or returns false with a message saying what was wrong.</summary>
    public static bool TryParse(string text, out TimeSpan duration, out string error)
    {
        duration = TimeSpan.Zero;
        error = "";
        string s = text.Trim();
        if (s.Length == 0)
        {
            error = "a duration is empty; write it like 90s, 15m, 6h or 7d.";
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
                error = $"'{text}' is not a duration; write it like 90s, 15m, 6h, 7d or 1h30m.";
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

        if (totalMs <= 0 || totalMs > TimeSpan.FromDays(3650).TotalMilliseconds)
        {
            error = $"'{text}' must be positive and at most 3650d.";
            return false;
        }

        duration = TimeSpan.FromMilliseconds(Math.Round(totalMs));
        return true;
    }

    /// <summary>Short form for display: the largest units that divide the duration (<c>1h30m</c>).</summary>
    public static string Format(TimeSpan duration)
    {
        if (duration <= TimeSpan.Zero)
        {
            return "0s";
        }

        var parts = new System.Text.StringBuilder();
        Append(parts, duration.Days, "d");
        Append(parts, duration.Hours, "h");
        Append(parts, duration.Minutes, "m");
        Append(parts, duration.Seconds, "s");
        Append(parts, duration.Milliseconds, "ms");
        return parts.ToString();
    }

    private static void Append(System.Text.StringBuilder parts, int amount, string unit)
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
