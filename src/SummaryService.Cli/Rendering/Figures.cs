using System.Globalization;
using SummaryService.Readable;

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

    /// <summary>
    /// How many times <paramref name="a"/> the value <paramref name="b"/> is (<c>×4.2</c>), or "—" when a
    /// ratio says nothing: a is zero, or the two lie on opposite sides of zero.
    /// </summary>
    public static string Ratio(double a, double b) =>
        a == 0 || (a > 0 && b < 0) || (a < 0 && b > 0) ? "—" : "×" + (b / a).ToString("0.##", CultureInfo.InvariantCulture);

    /// <summary>A quantile's usual name: min and max for 0 and 1, else p50, p99, p99.9, p99.99.</summary>
    public static string QuantileName(double q) => q switch
    {
        0 => "min",
        1 => "max",
        _ => "p" + Math.Round(q * 100, 6).ToString("0.######", CultureInfo.InvariantCulture),
    };

    /// <summary>A series or selection as people read it: <c>metric · name=value · …</c>.</summary>
    public static string Series(string metric, params IEnumerable<KeyValuePair<string, string>>[] labelSets) =>
        SeriesName.Of(metric, labelSets.SelectMany(l => l).DistinctBy(l => l.Key, StringComparer.Ordinal));

    /// <summary>Labels alone (<c>region=north · service=checkout</c>), or empty.</summary>
    public static string Labels(IEnumerable<KeyValuePair<string, string>> labels) => SeriesName.Labels(labels);
}
