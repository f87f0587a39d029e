namespace SummaryService.Store;

/// <summary>
/// Every series by metric name, so that a query reads only the series of its metric instead of
/// visiting every shard under its lock. Kept beside the shards: a series is listed here from the
/// moment it is added to its shard until it is removed from it (both under the shard lock).
/// </summary>
/// <remarks>
/// Its own lock is held only to add or remove one series, or to copy one metric's list; appends of
/// known series never take it.
/// </remarks>
internal sealed class SeriesCatalogue
{
    private readonly Dictionary<string, Dictionary<SeriesKey, SeriesTimeline>> _byMetric = new(StringComparer.Ordinal);
    private readonly object _gate = new();

    public void Add(SeriesTimeline timeline)
    {
        lock (_gate)
        {
            if (!_byMetric.TryGetValue(timeline.Key.Metric, out var series))
            {
                series = [];
                _byMetric.Add(timeline.Key.Metric, series);
            }

            series[timeline.Key] = timeline;
        }
    }

    public void Remove(SeriesKey key)
    {
        lock (_gate)
        {
            if (_byMetric.TryGetValue(key.Metric, out var series) && series.Remove(key) && series.Count == 0)
            {
                _byMetric.Remove(key.Metric);
            }
        }
    }

    /// <summary>The selected series' timelines in series-key order (ordinal), copied so the caller reads them without this lock.</summary>
    public List<SeriesTimeline> Select(SeriesSelector selector)
    {
        var selected = new List<SeriesTimeline>();
        lock (_gate)
        {
            if (_byMetric.TryGetValue(selector.Metric, out var series))
            {
                foreach (var (key, timeline) in series)
                {
                    if (selector.Selects(key))
                    {
                        selected.Add(timeline);
                    }
                }
            }
        }

        selected.Sort(static (a, b) => string.CompareOrdinal(a.Key.Canonical, b.Key.Canonical));
        return selected;
    }
}
