using System.Globalization;

namespace SummaryService.Cli.Rendering;

/// <summary>Number formatting for tables: invariant culture, five significant digits, absent figures as a dash.</summary>
public static class Figures
{
    /// <summary>The value, or "—" when the server left it out (undefined, never zero).</summary>
    public static string Of(double? value) => value is double v ? v.ToString("G5", CultureInfo.InvariantCulture) : "—";

    /// <summary>An interval as [low, high], or "—" when either end is missing.</summary>
    public static string Interval(double? low, double? high) => low is null || high is null ? "—" : $"[{Of(low)}, {Of(high)}]";

    /// <summary>A share as a percentage with two decimals.</summary>
    public static string Percent(double share) => (share * 100).ToString("0.##", CultureInfo.InvariantCulture) + "%";

    /// <summary>A quantile's usual name: p50, p99, p99.9; min and max for 0 and 1.</summary>
    public static string QuantileName(double q) => q switch
    {
        0 => "min (q0)",
        1 => "max (q1)",
        _ => "p" + (q * 100).ToString("0.###", CultureInfo.InvariantCulture),
    };

    /// <summary>Labels as {a=1, b=2}, or empty.</summary>
    public static string Labels(IEnumerable<KeyValuePair<string, string>> labels)
    {
        string joined = string.Join(", ", labels.OrderBy(l => l.Key, StringComparer.Ordinal).Select(l => $"{l.Key}={l.Value}"));
        return joined.Length == 0 ? "" : "{" + joined + "}";
    }
}
