namespace SummaryService.Store;

/// <summary>Which series a query reads: one metric, and labels every selected series must carry with these exact values.</summary>
public sealed record Selector(string Metric, IReadOnlyDictionary<string, string> MatchLabels)
{
    /// <summary>Every series of a metric.</summary>
    public Selector(string metric)
        : this(metric, new Dictionary<string, string>())
    {
    }

    /// <summary>True when the series belongs to the selection.</summary>
    public bool Selects(SeriesKey key) => string.Equals(key.Metric, Metric, StringComparison.Ordinal) && key.Matches(MatchLabels);
}
