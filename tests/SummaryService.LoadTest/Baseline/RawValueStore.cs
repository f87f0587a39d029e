using System.Collections.Concurrent;
using System.Text;

namespace SummaryService.LoadTest.Baseline;

/// <summary>The exact alternative to sketches: every raw value of every series, kept in memory.</summary>
public sealed class RawValueStore
{
    private readonly ConcurrentDictionary<string, RawSeries> _series = new(StringComparer.Ordinal);

    /// <summary>The series of a metric and label set, created on first use.</summary>
    public RawSeries SeriesOf(string metric, IReadOnlyDictionary<string, string> labels)
    {
        var key = new StringBuilder(metric);
        foreach (var (name, value) in labels.OrderBy(l => l.Key, StringComparer.Ordinal))
        {
            key.Append('\u0001').Append(name).Append('=').Append(value);
        }

        return _series.GetOrAdd(key.ToString(), _ => new RawSeries(metric, new Dictionary<string, string>(labels, StringComparer.Ordinal)));
    }

    /// <summary>Series of the metric carrying every listed label with exactly its value.</summary>
    public List<RawSeries> Select(string metric, IReadOnlyDictionary<string, string> match)
    {
        var selected = new List<RawSeries>();
        foreach (RawSeries series in _series.Values)
        {
            if (series.Metric != metric)
            {
                continue;
            }

            bool all = true;
            foreach (var (name, value) in match)
            {
                all &= series.Labels.TryGetValue(name, out string? have) && have == value;
            }

            if (all)
            {
                selected.Add(series);
            }
        }

        return selected;
    }
}
