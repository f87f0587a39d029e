using SummaryService.Readable;

namespace SummaryService.Store;

/// <summary>Which series a query reads: one metric, and labels every selected series must carry with these exact values.</summary>
public sealed record SeriesSelector(string Metric, IReadOnlyDictionary<string, string> LabelEquals)
{
    /// <summary>Every series of a metric.</summary>
    public SeriesSelector(string metric)
        : this(metric, new Dictionary<string, string>())
    {
    }

    /// <summary>True when the series belongs to the selection.</summary>
    public bool Selects(SeriesKey key) => string.Equals(key.Metric, Metric, StringComparison.Ordinal) && key.Matches(LabelEquals);

    /// <summary>The selection as people read it (<c>metric · region=north</c>), for messages.</summary>
    public override string ToString() => SeriesName.Of(Metric, LabelEquals);
}
