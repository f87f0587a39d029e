using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Store;

/// <summary>
/// In-memory series store: series spread over a power-of-two number of shards by a stable hash of
/// their key, one lock per shard, a batch taking its shard's lock once.
/// </summary>
/// <remarks>
/// Queries copy the overlapping buckets under the shard lock and merge the copies outside it, so
/// ingest waits at most for a copy and stored sketches are never mutated by a read.
/// </remarks>
public sealed partial class ShardedSeriesStore : ISeriesStore
{
    private readonly StoreOptions _options;
    private readonly TimeProvider _time;
    private readonly SeriesShard[] _shards;
    private readonly BatchValidator _validator;
    private readonly ProducerSequences _producers = new();
    private readonly Dictionary<string, int> _tenantSeries = new(StringComparer.Ordinal);
    private readonly object _catalogueGate = new();
    private int _seriesCount;
    private long _lastLsn;

    /// <summary>Creates an empty store.</summary>
    public ShardedSeriesStore(StoreOptions options, TimeProvider time)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(time);
        options.Validate();
        _options = options;
        _time = time;
        _validator = new BatchValidator(options);
        _shards = new SeriesShard[options.ShardCount];
        for (int i = 0; i < _shards.Length; i++)
        {
            _shards[i] = new SeriesShard();
        }
    }

    /// <summary>The options the store was built with.</summary>
    public StoreOptions Options => _options;

    internal ProducerSequences Producers => _producers;

    /// <inheritdoc/>
    public async ValueTask<AppendResult> AppendAsync(SeriesBatch batch, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(batch);
        long now = NowMs();
        long[] times = _validator.Validate(batch, now);
        var key = new SeriesKey(batch.Metric, batch.Labels);
        SeriesShard shard = ShardOf(key);
        Task? durable = null;
        lock (shard.Gate)
        {
            var timeline = Admit(shard, key, t => t.NewBucketsFor(times, now) * EmptyBucketBytes, "values", batch.Producer, batch.Sequence);
            if (timeline is null)
            {
                return new AppendResult(0, Duplicate: true);
            }

            shard.EstimatedBytes += timeline.Add(batch.Values.Span, times, now);
            ulong lsn = (ulong)Interlocked.Increment(ref _lastLsn);
            shard.AppliedLsn = lsn;

            // Written under the shard lock so that, within a shard, log order is apply order.
            if (Journal is { } journal)
            {
                durable = journal(LogRecordOf(lsn, batch, times));
            }
        }

        if (durable is not null)
        {
            await durable.WaitAsync(cancellationToken).ConfigureAwait(false);
        }

        return new AppendResult(batch.Values.Length, Duplicate: false);
    }

    /// <summary>
    /// Under the shard lock, the checks every write passes before it changes anything: the memory
    /// budget for the buckets it would open, the series limits for a new series, and its producer
    /// sequence. Returns the series' timeline (added to the shard if new), or null for a repeat.
    /// </summary>
    private SeriesTimeline? Admit(SeriesShard shard, SeriesKey key, Func<SeriesTimeline, long> newBucketBytes, string field, string producer, ulong sequence)
    {
        bool known = shard.Series.TryGetValue(key, out var timeline);
        timeline ??= new SeriesTimeline(key, _options);
        long needed = newBucketBytes(timeline);
        if (needed > 0 && TotalEstimatedBytes() + needed > _options.MemoryBudgetBytes)
        {
            throw new StoreRejectedException(RejectReason.MemoryLimit, field, $"the store's memory budget of {_options.MemoryBudgetBytes} bytes is spent; no new bucket can be opened for {key}.");
        }

        if (!known)
        {
            ReserveSeries(key, enforceLimits: true);
        }

        if (!_producers.TryClaim(producer, sequence, NowMs()))
        {
            if (!known)
            {
                ReleaseSeries(key);
            }

            return null;
        }

        if (!known)
        {
            shard.Series.Add(key, timeline);
        }

        return timeline;
    }

    /// <inheritdoc/>
    public WindowSummary Summarize(Selector selector, TimeRange window, IReadOnlyList<string> groupBy, SummaryOptions options)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        ArgumentNullException.ThrowIfNull(options);
        if (window.FromUnixMs >= window.ToUnixMs)
        {
            throw new StoreRejectedException(RejectReason.InvalidWindow, "window", $"window from {window.FromUnixMs} is not before to {window.ToUnixMs}; windows are half-open [from, to).");
        }

        try
        {
            options.Validate();
        }
        catch (ArgumentOutOfRangeException ex)
        {
            throw new StoreRejectedException(RejectReason.InvalidQuery, ex.ParamName ?? "options", ex.Message);
        }

        // The covered range starts as the window and widens to whole buckets. A shard visited before
        // the range last widened may hold buckets in the widened part, so the pass repeats until a
        // whole pass leaves the range as it found it; copies from an earlier pass are dropped.
        TimeRange covered = window;
        while (true)
        {
            TimeRange atStart = covered;
            var groups = CopyGroups(selector, groupBy, ref covered);
            if (covered == atStart)
            {
                var results = groups.Values.Select(g => MergeGroup(g.Labels, g.Copies, options)).ToArray();
                return new WindowSummary(results, covered);
            }
        }
    }

    private SortedDictionary<string, (Dictionary<string, string> Labels, List<SeriesParts> Copies)> CopyGroups(Selector selector, IReadOnlyList<string> groupBy, ref TimeRange covered)
    {
        long now = NowMs();
        var groups = new SortedDictionary<string, (Dictionary<string, string> Labels, List<SeriesParts> Copies)>(StringComparer.Ordinal);
        foreach (SeriesShard shard in _shards)
        {
            lock (shard.Gate)
            {
                foreach (var (key, timeline) in shard.Series)
                {
                    if (!selector.Selects(key))
                    {
                        continue;
                    }

                    var labels = groupBy.ToDictionary(name => name, name => key.Label(name) ?? "", StringComparer.Ordinal);
                    string groupKey = string.Join('\u0001', groupBy.Select(name => labels[name]));
                    if (!groups.TryGetValue(groupKey, out var group))
                    {
                        group = (labels, []);
                        groups.Add(groupKey, group);
                    }

                    timeline.WidenToBuckets(ref covered);
                    var parts = new List<QueryPart>();
                    timeline.PlanParts(covered, now, parts);
                    group.Copies.Add(new SeriesParts(key.Canonical, shard, timeline, timeline.Epoch, parts));
                }
            }
        }

        return groups;
    }

    // Merged in series-key order, each series' parts in time order, so that the same data always
    // gives the same bits whether its blocks were cached or built for this query.
    private GroupSummary MergeGroup(Dictionary<string, string> labels, List<SeriesParts> copies, SummaryOptions options)
    {
        var merged = new SeriesSketch(_options.Sketch, seed: 0);
        foreach (SeriesParts series in copies.OrderBy(c => c.Series, StringComparer.Ordinal))
        {
            foreach (QueryPart part in series.Parts)
            {
                merged.Merge(part.Resolve(_options.Sketch, part.Block is { } block ? series.Timeline.SeedFor(block) : 0));
            }

            if (series.Parts.Any(p => p.Buckets is not null))
            {
                lock (series.Shard.Gate)
                {
                    series.Timeline.CacheBlocks(series.Parts, series.Epoch);
                }
            }
        }

        return new GroupSummary(labels, merged.Summarize(options), copies.Count, merged);
    }

    /// <summary>What one series contributes to a window answer, and where to cache the blocks built for it.</summary>
    private sealed record SeriesParts(string Series, SeriesShard Shard, SeriesTimeline Timeline, long Epoch, List<QueryPart> Parts);

    /// <inheritdoc/>
    public IReadOnlyList<SeriesInfo> ListSeries(string? metric = null)
    {
        var list = new List<SeriesInfo>();
        foreach (SeriesShard shard in _shards)
        {
            lock (shard.Gate)
            {
                foreach (var (key, timeline) in shard.Series)
                {
                    if (metric is not null && !string.Equals(key.Metric, metric, StringComparison.Ordinal))
                    {
                        continue;
                    }

                    long count = 0;
                    long from = long.MaxValue;
                    long to = long.MinValue;
                    for (int i = 0; i < timeline.Tiers.Count; i++)
                    {
                        long width = _options.Tiers[i].WidthMs;
                        foreach (var (start, sketch) in timeline.Tiers[i])
                        {
                            count += sketch.Count;
                            from = Math.Min(from, start);
                            to = Math.Max(to, start + width);
                        }
                    }

                    list.Add(new SeriesInfo(key, count, from <= to ? new TimeRange(from, to) : default, timeline.BucketCount));
                }
            }
        }

        return list.OrderBy(s => s.Key.Canonical, StringComparer.Ordinal).ToArray();
    }

    /// <inheritdoc/>
    public bool Delete(SeriesKey key)
    {
        ArgumentNullException.ThrowIfNull(key);
        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            if (!shard.Series.Remove(key, out var timeline))
            {
                return false;
            }

            shard.EstimatedBytes -= timeline.EstimatedBytes;
            ReleaseSeries(key);
            return true;
        }
    }

    /// <inheritdoc/>
    public StoreStats GetStats()
    {
        var tierBuckets = new long[_options.Tiers.Count];
        var tierBytes = new long[_options.Tiers.Count];
        var shards = new ShardStats[_shards.Length];
        int series = 0;
        for (int s = 0; s < _shards.Length; s++)
        {
            SeriesShard shard = _shards[s];
            lock (shard.Gate)
            {
                long buckets = 0;
                foreach (SeriesTimeline timeline in shard.Series.Values)
                {
                    for (int i = 0; i < tierBuckets.Length; i++)
                    {
                        tierBuckets[i] += timeline.Tiers[i].Count;
                        tierBytes[i] += timeline.EstimatedBytesOfTier(i);
                    }

                    buckets += timeline.BucketCount;
                }

                series += shard.Series.Count;
                shards[s] = new ShardStats(s, shard.Series.Count, buckets, shard.EstimatedBytes);
            }
        }

        var tiers = _options.Tiers.Select((t, i) => new TierStats(t.BucketWidth, tierBuckets[i], tierBytes[i])).ToArray();
        return new StoreStats(series, tierBuckets.Sum(), tierBytes.Sum(), tiers, shards, _producers.Count);
    }

    /// <inheritdoc/>
    public void Roll()
    {
        long now = NowMs();
        foreach (SeriesShard shard in _shards)
        {
            lock (shard.Gate)
            {
                List<SeriesKey>? emptied = null;
                foreach (var (key, timeline) in shard.Series)
                {
                    shard.EstimatedBytes += timeline.Roll(now);
                    if (timeline.BucketCount == 0)
                    {
                        (emptied ??= []).Add(key);
                    }
                }

                foreach (SeriesKey key in emptied ?? [])
                {
                    shard.Series.Remove(key);
                    ReleaseSeries(key);
                }
            }
        }

        _producers.Expire(now - (long)_options.ProducerMarkRetention.TotalMilliseconds);
    }

    // Rough size of a freshly opened bucket's sketch, for the budget check before it exists.
    private static readonly long EmptyBucketBytes = new SeriesSketch(SeriesSketchOptions.Default).EstimatedBytes;

    private long NowMs() => _time.GetUtcNow().ToUnixTimeMilliseconds();

    private SeriesShard ShardOf(SeriesKey key) => _shards[(int)(key.Hash & (ulong)(_shards.Length - 1))];

    private long TotalEstimatedBytes()
    {
        long total = 0;
        foreach (SeriesShard shard in _shards)
        {
            total += Volatile.Read(ref shard.EstimatedBytes);
        }

        return total;
    }

    private static string TenantOf(SeriesKey key)
    {
        int dot = key.Metric.IndexOf('.', StringComparison.Ordinal);
        return dot < 0 ? key.Metric : key.Metric[..dot];
    }

    private void ReserveSeries(SeriesKey key, bool enforceLimits)
    {
        string tenant = TenantOf(key);
        lock (_catalogueGate)
        {
            int tenantCount = _tenantSeries.GetValueOrDefault(tenant);
            if (enforceLimits)
            {
                CheckSeriesLimits(key, tenant, tenantCount);
            }

            _seriesCount++;
            _tenantSeries[tenant] = tenantCount + 1;
        }
    }

    private void CheckSeriesLimits(SeriesKey key, string tenant, int tenantCount)
    {
        if (_seriesCount >= _options.MaxSeries)
        {
            throw new StoreRejectedException(RejectReason.SeriesLimit, "metric", $"the store holds {_seriesCount} series, its limit; {key} would be new.");
        }

        if (tenantCount >= _options.MaxSeriesPerTenant)
        {
            throw new StoreRejectedException(RejectReason.SeriesLimit, "metric", $"tenant '{tenant}' holds {tenantCount} series, its limit; {key} would be new.");
        }
    }

    private void ReleaseSeries(SeriesKey key)
    {
        string tenant = TenantOf(key);
        lock (_catalogueGate)
        {
            _seriesCount--;
            int left = _tenantSeries[tenant] - 1;
            if (left == 0)
            {
                _tenantSeries.Remove(tenant);
            }
            else
            {
                _tenantSeries[tenant] = left;
            }
        }
    }
}
