using SummaryService.Sketches;
using SummaryService.Store.Segments;

namespace SummaryService.Store;

/// <summary>
/// Aged buckets of a timeline that live in segment files: per tier, a start time and where the
/// bucket lies, beside the in-memory buckets (a start is in one of the two, never both). Every
/// other part of the timeline sees them as buckets like any other — widening, block planning,
/// rollup — so answers read the same figures whether a bucket is in memory or on disk. A bucket
/// that must change (a late value, a rollup merge) is read back into memory first and its segment
/// reference let go.
/// </summary>
internal sealed partial class SeriesTimeline
{
    private SortedList<long, AgedBucket>[]? _aged;
    private List<LostSpan>? _lost;

    /// <summary>Buckets of the tier held in segment files.</summary>
    public IList<long> AgedStarts(int tier) => _aged?[tier].Keys ?? [];

    /// <summary>Values in the tier's buckets held in segment files.</summary>
    public IEnumerable<(long Start, long Values)> AgedCounts(int tier) =>
        _aged is null ? [] : _aged[tier].Select(a => (a.Key, a.Value.Location.Values));

    public int AgedCount => _aged?.Sum(t => t.Count) ?? 0;

    /// <summary>Spans whose aged buckets could not be read back.</summary>
    public IReadOnlyList<LostSpan> Lost => _lost ?? [];

    /// <summary>In-memory buckets of the tier that end at or before <paramref name="cutoffMs"/>, oldest first, with their counts now.</summary>
    public List<(long StartMs, SeriesSketch Sketch)> Movable(int tier, long cutoffMs)
    {
        long width = options.Tiers[tier].WidthMs;
        var buckets = _tiers[tier];
        var movable = new List<(long, SeriesSketch)>();
        for (int j = 0; j < buckets.Count && buckets.Keys[j] + width <= cutoffMs; j++)
        {
            movable.Add((buckets.Keys[j], buckets.Values[j]));
        }

        return movable;
    }

    /// <summary>
    /// Points the moved buckets at their segment copies and drops them from memory — each only if it
    /// is still the same sketch with the same count as when it was written (otherwise it changed
    /// meanwhile and stays). Returns the change in estimated bytes.
    /// </summary>
    public long ToAged(int tier, List<(long StartMs, SeriesSketch Sketch)> moved, IReadOnlyList<long> countsWhenWritten, SegmentHandle segment, IReadOnlyList<BucketLocation> locations)
    {
        _aged ??= CreateAged(_tiers.Length);
        long change = 0;
        var buckets = _tiers[tier];
        for (int i = 0; i < moved.Count; i++)
        {
            var (start, sketch) = moved[i];
            if (!buckets.TryGetValue(start, out var current) || !ReferenceEquals(current, sketch) || current.Count != countsWhenWritten[i])
            {
                continue;
            }

            buckets.Remove(start);
            change -= sketch.EstimatedBytes;
            segment.AddReference();
            _aged[tier].Add(start, new AgedBucket(segment, locations[i]));
        }

        return change;
    }

    /// <summary>Lets go of every segment reference (the series is removed).</summary>
    public void ReleaseAged()
    {
        ReleaseAgedBlocks();
        foreach (var tier in _aged ?? [])
        {
            foreach (AgedBucket aged in tier.Values)
            {
                aged.Segment.Release();
            }

            tier.Clear();
        }
    }

    /// <summary>Every bucket of the timeline held in a segment.</summary>
    public IEnumerable<AgedBucket> AgedBuckets() => _aged?.SelectMany(t => t.Values) ?? [];

    /// <summary>
    /// Puts back a bucket a snapshot's manifest lists: as a reference into its segment when it
    /// fits the current tier layout and no bucket holds its start yet, otherwise read and placed
    /// like any other saved bucket. Returns the change in estimated bytes.
    /// </summary>
    public long AddAged(int tier, AgedBucket aged, long nowMs)
    {
        long start = aged.Location.StartMs;
        bool fits = tier < _tiers.Length && options.Tiers[tier].WidthMs == aged.Segment.Reader.Info.WidthMs && AlignDown(start, options.Tiers[tier].WidthMs) == start;
        _aged ??= CreateAged(_tiers.Length);
        if (fits && !_tiers[tier].ContainsKey(start) && !_aged[tier].ContainsKey(start))
        {
            aged.Segment.AddReference();
            _aged[tier].Add(start, aged);
            return 0;
        }

        try
        {
            return Place(fits ? tier : -1, start, aged.Load(), nowMs);
        }
        catch (SegmentDamagedException ex)
        {
            aged.Segment.ReportDamage(ex);
            Lose(new LostSpan(new TimeWindow(start, start + aged.Segment.Reader.Info.WidthMs), ex.FileName));
            return 0;
        }
    }

    /// <summary>Every aged bucket read back, for a snapshot that holds buckets whole; unreadable ones are recorded as lost and left out.</summary>
    public IEnumerable<(int Tier, long Start, SeriesSketch Sketch)> LoadAged()
    {
        for (int tier = 0; tier < (_aged?.Length ?? 0); tier++)
        {
            foreach (long start in _aged![tier].Keys.ToArray())
            {
                if (TryLoad(tier, start, keep: true) is { } sketch)
                {
                    yield return (tier, start, sketch);
                }
            }
        }
    }

    /// <summary>
    /// Moves the start of <paramref name="range"/> later until no lost span overlaps it and no bucket
    /// straddles it: an answer then merges only whole buckets after the last loss it touches.
    /// Returns true when it moved.
    /// </summary>
    public bool NarrowPastLoss(ref TimeWindow range)
    {
        if (_lost is null)
        {
            return false;
        }

        long from = range.FromUnixMs;
        bool moved = true;
        while (moved && from < range.ToUnixMs)
        {
            moved = false;
            foreach (LostSpan lost in _lost)
            {
                if (lost.Range.FromUnixMs < range.ToUnixMs && lost.Range.ToUnixMs > from)
                {
                    from = lost.Range.ToUnixMs;
                    moved = true;
                }
            }

            for (int i = 0; i < _tiers.Length; i++)
            {
                long width = options.Tiers[i].WidthMs;
                foreach (IList<long> starts in StartLists(i))
                {
                    int j = FirstEndingAfter(starts, from, width);
                    if (j < starts.Count && starts[j] < from)
                    {
                        from = starts[j] + width;
                        moved = true;
                    }
                }
            }
        }

        bool narrowed = from != range.FromUnixMs;
        range = new TimeWindow(Math.Min(from, range.ToUnixMs), range.ToUnixMs);
        return narrowed;
    }

    /// <summary>Records a span whose buckets are gone with a damaged segment (found now, or remembered by a snapshot); each span once.</summary>
    public void Lose(LostSpan span)
    {
        _lost ??= [];
        if (!_lost.Contains(span))
        {
            _lost.Add(span);
        }
    }

    /// <summary>True when some lost span overlaps <paramref name="range"/>.</summary>
    public bool LostWithin(TimeWindow range) => _lost?.Exists(l => l.Range.Overlaps(range)) ?? false;

    // The tier's in-memory starts, and its aged ones when there are any.
    private IEnumerable<IList<long>> StartLists(int tier)
    {
        yield return _tiers[tier].Keys;
        if (_aged is not null && _aged[tier].Count > 0)
        {
            yield return _aged[tier].Keys;
        }
    }

    // Before a bucket changes: if it lives in a segment, it comes back into memory. Returns the change in estimated bytes.
    private long Materialize(int tier, long bucketStart)
    {
        if (_aged is null || !_aged[tier].ContainsKey(bucketStart))
        {
            return 0;
        }

        if (TryLoad(tier, bucketStart, keep: false) is not { } sketch)
        {
            return 0;
        }

        _tiers[tier].Add(bucketStart, sketch);
        return sketch.EstimatedBytes;
    }

    // Aged buckets past the tier's horizon: read back to roll on into the next tier, or, past the last tier, let go.
    private long RollAged(int tier, long horizon)
    {
        if (_aged is null)
        {
            return 0;
        }

        long change = 0;
        long width = options.Tiers[tier].WidthMs;
        var aged = _aged[tier];
        while (aged.Count > 0 && aged.Keys[0] + width <= horizon)
        {
            long start = aged.Keys[0];
            if (tier + 1 < _tiers.Length)
            {
                change += Materialize(tier, start);
            }
            else
            {
                aged.Values[0].Segment.Release();
                aged.RemoveAt(0);
                Invalidate(tier, start);
            }
        }

        if (tier + 1 == _tiers.Length)
        {
            // Past the last tier's retention nothing is answered anyway: the loss need not be told.
            _lost?.RemoveAll(l => l.Range.ToUnixMs <= horizon);
        }

        return change;
    }

    // The tier's buckets overlapping the range in time order, in memory or aged, each given as a
    // fresh copy when asked; null for an aged bucket that turned out unreadable.
    private (IList<long> Starts, Func<int, SeriesSketch?> Copy) View(int tier, TimeWindow range)
    {
        var buckets = _tiers[tier];
        if (_aged is null || _aged[tier].Count == 0)
        {
            return (buckets.Keys, j => buckets.Values[j].Clone());
        }

        long width = options.Tiers[tier].WidthMs;
        var merged = new SortedList<long, SeriesSketch?>();
        var aged = _aged[tier];
        for (int j = FirstEndingAfter(buckets.Keys, range.FromUnixMs, width); j < buckets.Count && buckets.Keys[j] < range.ToUnixMs; j++)
        {
            merged.Add(buckets.Keys[j], buckets.Values[j]);
        }

        var inAged = new List<long>();
        for (int j = FirstEndingAfter(aged.Keys, range.FromUnixMs, width); j < aged.Count && aged.Keys[j] < range.ToUnixMs; j++)
        {
            inAged.Add(aged.Keys[j]);
        }

        foreach (long start in inAged)
        {
            merged.Add(start, null);
        }

        var starts = merged.Keys;
        return (starts, j => merged.Values[j]?.Clone() ?? TryLoad(tier, starts[j], keep: true));
    }

    // Reads an aged bucket; unless kept (a query's or a snapshot's copy), it leaves the aged list and
    // lets go of its segment, since the caller takes it back into memory. An unreadable one is
    // recorded as lost and leaves the list either way.
    private SeriesSketch? TryLoad(int tier, long start, bool keep)
    {
        AgedBucket aged = _aged![tier][start];
        try
        {
            SeriesSketch sketch = aged.Load();
            if (!keep)
            {
                _aged[tier].Remove(start);
                aged.Segment.Release();
            }

            return sketch;
        }
        catch (SegmentDamagedException ex)
        {
            _aged[tier].Remove(start);
            aged.Segment.Release();
            aged.Segment.ReportDamage(ex);
            Lose(new LostSpan(new TimeWindow(start, start + options.Tiers[tier].WidthMs), ex.FileName));
            Invalidate(tier, start);
            Epoch++;
            return null;
        }
    }

    private static SortedList<long, AgedBucket>[] CreateAged(int count)
    {
        var tiers = new SortedList<long, AgedBucket>[count];
        for (int i = 0; i < count; i++)
        {
            tiers[i] = [];
        }

        return tiers;
    }
}
