namespace SummaryService.Store.Segments;

/// <summary>The live buckets of each segment as a snapshot's shard exports see them: one bit per bucket of the file.</summary>
internal sealed class SegmentManifestBuilder
{
    private readonly Dictionary<SegmentHandle, bool[]> _live = [];
    private readonly List<(SeriesKey Key, LostSpan Span)> _lost = [];

    /// <summary>Marks a bucket live; call under the lock of the shard being exported.</summary>
    public void Mark(AgedBucket bucket)
    {
        lock (_live)
        {
            if (!_live.TryGetValue(bucket.Segment, out var live))
            {
                live = new bool[bucket.Segment.Reader.Buckets.Count];
                _live.Add(bucket.Segment, live);
            }

            live[bucket.Location.Ordinal] = true;
        }
    }

    /// <summary>Remembers a span the series lost to a damaged segment; call under the lock of the shard being exported.</summary>
    public void MarkLost(SeriesKey key, LostSpan span)
    {
        lock (_live)
        {
            _lost.Add((key, span));
        }
    }

    public bool Holds(SegmentHandle segment)
    {
        lock (_live)
        {
            return _live.ContainsKey(segment);
        }
    }

    public List<(string File, bool[] Live)> Segments()
    {
        lock (_live)
        {
            return [.. _live.Select(s => (s.Key.FileName, s.Value)).OrderBy(s => s.FileName, StringComparer.Ordinal)];
        }
    }

    public List<(SeriesKey Key, LostSpan Span)> Lost()
    {
        lock (_live)
        {
            return [.. _lost];
        }
    }
}
