namespace SummaryService.Readable;

/// <summary>
/// How a series (a metric with one label set), or a selection of series, is written for people:
/// the metric, then each label as name=value in name order, separated by middle dots —
/// <c>otterbyte.checkout.latency_ms · region=north · service=checkout</c>. Used in error messages,
/// headings and logs. It is a display form only: the store hashes its own escaped canonical key.
/// </summary>
public static class SeriesName
{
    /// <summary>The separator between the metric and each label.</summary>
    public const string Separator = " · ";

    /// <summary>The display form of <paramref name="metric"/> with <paramref name="labels"/>.</summary>
    public static string Of(string metric, IEnumerable<KeyValuePair<string, string>>? labels)
    {
        ArgumentNullException.ThrowIfNull(metric);
        string joined = Labels(labels);
        return joined.Length == 0 ? metric : metric + Separator + joined;
    }

    /// <summary>Only the labels, in name order (<c>region=north · service=checkout</c>); empty when there are none.</summary>
    public static string Labels(IEnumerable<KeyValuePair<string, string>>? labels) =>
        labels is null ? "" : string.Join(Separator, labels.OrderBy(l => l.Key, StringComparer.Ordinal).Select(l => $"{l.Key}={l.Value}"));
}
