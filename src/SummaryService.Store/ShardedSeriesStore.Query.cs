using SummaryService.Readable;
using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>Window queries: the selected series come from the catalogue, each read under its own lock only for a copy.</summary>
public sealed partial class ShardedSeriesStore
{
    /// <summary>Most steps one <see cref="ReadStepsAsync"/> call answers; the server's own limit is lower.</summary>
    public const int MaxSteps = 1_000_000;

    /// <inheritdoc/>
    public ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        CheckWindow(window);
        return ValueTask.FromResult(new StepQuery(this, selector, groupBy, [window]).Answer(0));
    }

    /// <inheritdoc/>
    public ValueTask<IReadOnlyList<WindowSketches>> ReadStepsAsync(SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        CheckWindow(window);
        if (stepMs < 1)
        {
            throw new StoreRejectedException(RejectReason.InvalidQuery, "step", $"step is {DurationText.Format(TimeSpan.FromMilliseconds(stepMs))}; it must be at least 1ms.");
        }

        long count = ((window.Length - 1) / stepMs) + 1;
        if (count > MaxSteps)
        {
            throw new StoreRejectedException(RejectReason.InvalidQuery, "step", $"step {DurationText.Format(TimeSpan.FromMilliseconds(stepMs))} cuts the window into {count} steps; at most {MaxSteps} are answered per call.");
        }

        var steps = new TimeWindow[count];
        for (int i = 0; i < steps.Length; i++)
        {
            long from = window.FromUnixMs + (i * stepMs);
            steps[i] = new TimeWindow(from, Math.Min(from + stepMs, window.ToUnixMs));
        }

        var query = new StepQuery(this, selector, groupBy, steps);
        var answers = new WindowSketches[steps.Length];
        for (int i = 0; i < answers.Length; i++)
        {
            cancellationToken.ThrowIfCancellationRequested();
            answers[i] = query.Answer(i);
        }

        return ValueTask.FromResult<IReadOnlyList<WindowSketches>>(answers);
    }

    private static void CheckWindow(TimeWindow window)
    {
        if (window.FromUnixMs >= window.ToUnixMs)
        {
            throw new StoreRejectedException(RejectReason.InvalidWindow, "window", $"window from {TimeText.IsoAndUnixMs(window.FromUnixMs)} is not before to {TimeText.IsoAndUnixMs(window.ToUnixMs)}; windows are half-open [from, to).");
        }
    }

    /// <summary>
    /// One query over one or more steps. The selected series and their groups are found once; then
    /// each step is answered in turn: its covered range widened to whole buckets across every
    /// series, its parts copied series by series (one series lock at a time, for a copy only), and
    /// merged outside any lock. A step's answer is what <see cref="ReadAsync"/> of that step alone gives.
    /// </summary>
    private sealed class StepQuery
    {
        private readonly ShardedSeriesStore _store;
        private readonly TimeWindow[] _covered;
        private readonly List<QueryGroup> _groups;
        private readonly long _nowMs;

        public StepQuery(ShardedSeriesStore store, SeriesSelector selector, IReadOnlyList<string> groupBy, TimeWindow[] steps)
        {
            _store = store;
            _nowMs = store.NowMs();
            _covered = steps;
            _groups = GroupsOf(store._catalogue.Select(selector), groupBy);
            WidenAll();
        }

        public WindowSketches Answer(int step)
        {
            var parts = new SeriesCopy[_groups.Count][];
            while (true)
            {
                // A series may have opened a straddling bucket since the widening: then the step
                // widens again and its copies are taken afresh, as a single window query would.
                TimeWindow atStart = _covered[step];
                for (int g = 0; g < _groups.Count; g++)
                {
                    parts[g] = CopyParts(_groups[g].Series, step);
                }

                NarrowPastLoss(step);
                if (_covered[step] == atStart)
                {
                    break;
                }
            }

            var results = new GroupSketch[_groups.Count];
            for (int g = 0; g < _groups.Count; g++)
            {
                results[g] = Merge(_groups[g], parts[g]);
            }

            return new WindowSketches(results, _covered[step]);
        }

        // A damaged segment found while copying leaves its buckets out: the step then starts after
        // the last loss it touches, at a bucket edge of every series, and is copied afresh.
        private void NarrowPastLoss(int step)
        {
            bool lost = false;
            foreach (SeriesTimeline timeline in _groups.SelectMany(g => g.Series))
            {
                lock (timeline)
                {
                    lost |= timeline.LostWithin(_covered[step]);
                }
            }

            bool moved = lost;
            while (moved)
            {
                moved = false;
                foreach (SeriesTimeline timeline in _groups.SelectMany(g => g.Series))
                {
                    lock (timeline)
                    {
                        moved |= timeline.NarrowPastLoss(ref _covered[step]);
                    }
                }
            }
        }

        // Widening needs no copies, so every step settles first with one short lock per series;
        // each widening can only be forced by some bucket, so the passes end.
        private void WidenAll()
        {
            bool changed = true;
            while (changed)
            {
                changed = false;
                foreach (QueryGroup group in _groups)
                {
                    foreach (SeriesTimeline timeline in group.Series)
                    {
                        lock (timeline)
                        {
                            for (int i = 0; i < _covered.Length; i++)
                            {
                                TimeWindow before = _covered[i];
                                timeline.WidenToBuckets(ref _covered[i]);
                                changed |= before != _covered[i];
                            }
                        }
                    }
                }
            }
        }

        private SeriesCopy[] CopyParts(List<SeriesTimeline> series, int step)
        {
            var copies = new SeriesCopy[series.Count];
            for (int s = 0; s < series.Count; s++)
            {
                SeriesTimeline timeline = series[s];
                var parts = new List<QueryPart>();
                lock (timeline)
                {
                    timeline.WidenToBuckets(ref _covered[step]);
                    timeline.PlanParts(_covered[step], _nowMs, parts);
                    copies[s] = new SeriesCopy(parts, timeline.Epoch);
                }
            }

            return copies;
        }

        // Merged in series-key order, each series' parts in time order, so that the same data always
        // gives the same bits whether its blocks were cached or built for this query.
        private GroupSketch Merge(QueryGroup group, SeriesCopy[] parts)
        {
            SeriesSketchOptions sketchOptions = _store._options.Sketch;
            var merged = new SeriesSketch(sketchOptions, seed: 0);
            for (int s = 0; s < parts.Length; s++)
            {
                SeriesTimeline timeline = group.Series[s];
                bool built = false;
                foreach (QueryPart part in parts[s].Parts)
                {
                    built |= part.Buckets is not null;
                    merged.Merge(part.Resolve(sketchOptions, part.Block is { } block ? timeline.SeedFor(block) : 0));
                }

                if (built)
                {
                    lock (timeline)
                    {
                        timeline.CacheBlocks(parts[s].Parts, parts[s].Epoch);
                    }
                }
            }

            return new GroupSketch(group.Labels, merged, group.Series.Count);
        }

        private static List<QueryGroup> GroupsOf(List<SeriesTimeline> selected, IReadOnlyList<string> groupBy)
        {
            var groups = new SortedDictionary<string, QueryGroup>(StringComparer.Ordinal);
            var values = new string[groupBy.Count];
            foreach (SeriesTimeline timeline in selected)
            {
                var labels = new Dictionary<string, string>(groupBy.Count, StringComparer.Ordinal);
                for (int i = 0; i < groupBy.Count; i++)
                {
                    values[i] = timeline.Key.Label(groupBy[i]) ?? "";
                    labels[groupBy[i]] = values[i];
                }

                string groupKey = string.Join('\u0001', values);
                if (!groups.TryGetValue(groupKey, out var group))
                {
                    group = new QueryGroup(labels, []);
                    groups.Add(groupKey, group);
                }

                group.Series.Add(timeline);
            }

            return [.. groups.Values];
        }
    }

    /// <summary>One series' parts of one step, and the block epoch they were copied at (blocks built from them are cached only if it is unchanged).</summary>
    private readonly record struct SeriesCopy(List<QueryPart> Parts, long Epoch);

    /// <summary>One group of a query: its label values and its series in series-key order.</summary>
    private sealed record QueryGroup(Dictionary<string, string> Labels, List<SeriesTimeline> Series);
}
