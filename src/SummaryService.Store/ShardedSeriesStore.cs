using SummaryService.Sketches;
using SummaryService.Store.Persistence;

namespace SummaryService.Store;

/// <summary>
/// In-memory series store: series spread over a power-of-two number of shards by a stable hash of
/// their key, one lock per shard, a batch taking its shard's lock once.
/// </summary>
/// <remarks>
/// Locks: the shard lock guards its series dictionary, the log order and every change to a
/// series; each series' timeline is also its own lock (taken inside the shard lock), held while its
/// buckets change and while a query copies them. Queries find their series in the catalogue and
/// take only series locks, one at a time and only for a copy, then merge the copies outside any
/// lock: a query waits only for a batch of its own series, ingest waits at most for a copy, and
/// stored sketches are never mutated by a read.
/// </remarks>
/// <para>
/// Without persistence it is also its own <see cref="IStoreMaintenance"/> (durability None: rollup
/// only, no snapshots). Its synchronous <see cref="ListSeries"/>, <see cref="Remove"/>,
/// <see cref="GetStats"/> and <see cref="Roll"/> are for in-process callers of this implementation;
/// everything else reaches it through the seam.
/// </para>
public sealed partial class ShardedSeriesStore : ISeriesStore, IStoreMaintenance
{
    private readonly StoreOptions _options;
    private readonly TimeProvider _time;
    private readonly SeriesShard[] _shards;
    private readonly BatchValidator _validator;
    private readonly IProducerLedger _producers;
    private readonly Dictionary<string, int> _tenantSeries = new(StringComparer.Ordinal);
    private readonly object _catalogueGate = new();
    private readonly SeriesCatalogue _catalogue = new();
    private int _seriesCount;
    private long _lastLsn;

    /// <summary>Creates an empty store.</summary>
    /// <param name="options">Tiers, limits and sketch settings.</param>
    /// <param name="time">The store's clock.</param>
    /// <param name="producers">Where applied producer sequences are remembered; a fresh <see cref="ProducerSequences"/> when null.</param>
    public ShardedSeriesStore(StoreOptions options, TimeProvider time, IProducerLedger? producers = null)
    {
        ArgumentNullException.ThrowIfNull(options);
        ArgumentNullException.ThrowIfNull(time);
        options.Validate();
        _options = options;
        _time = time;
        _validator = new BatchValidator(options);
        _producers = producers ?? new ProducerSequences();
        _shards = new SeriesShard[options.ShardCount];
        for (int i = 0; i < _shards.Length; i++)
        {
            _shards[i] = new SeriesShard();
        }
    }

    /// <summary>The options the store was built with.</summary>
    public StoreOptions Options => _options;

    internal IProducerLedger Producers => _producers;

    /// <inheritdoc/>
    public DurabilityMode Durability => DurabilityMode.None;

    /// <inheritdoc/>
    public string? WriteTrouble => WriteRefusal?.Invoke();

    /// <inheritdoc/>
    public string? SnapshotTrouble => null;

    /// <inheritdoc/>
    public async ValueTask<AppendResult> AppendAsync(SeriesBatch batch, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(batch);
        long now = NowMs();
        TimeRun[] times = _validator.Validate(batch, now);
        RefuseWhileStorageFails();
        var key = new SeriesKey(batch.Metric, batch.Labels);
        SeriesShard shard = ShardOf(key);
        Task? durable;
        bool duplicate;
        lock (shard.Gate)
        {
            var timeline = Admit(shard, key, t => t.NewBucketsFor(times, now) * EmptyBucketBytes, "values", batch.Producer, batch.Sequence);
            duplicate = timeline is null;
            durable = duplicate ? DurableBarrier?.Invoke() : Apply(shard, timeline!, batch, times, now);
        }

        if (durable is not null)
        {
            await AwaitDurableAsync(durable, cancellationToken).ConfigureAwait(false);
        }

        return duplicate ? new AppendResult(0, Duplicate: true) : new AppendResult(batch.Values.Length, Duplicate: false);
    }

    // Under the shard lock: the values into their buckets, the next LSN, and the log record (so that,
    // within a shard, log order is apply order). Returns the record's durability, if there is a log.
    private Task? Apply(SeriesShard shard, SeriesTimeline timeline, SeriesBatch batch, TimeRun[] times, long now)
    {
        lock (timeline)
        {
            shard.EstimatedBytes += timeline.Add(batch.Values.Span, times, now);
        }

        ulong lsn = (ulong)Interlocked.Increment(ref _lastLsn);
        shard.AppliedLsn = lsn;
        return Journal?.Invoke(LogRecordOf(lsn, timeline.Key, batch, times));
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
            AddSeries(shard, timeline);
        }

        return timeline;
    }

    /// <inheritdoc/>
    public ValueTask<IReadOnlyList<SeriesInfo>> ListSeriesAsync(string? metric = null, CancellationToken cancellationToken = default) =>
        ValueTask.FromResult(ListSeries(metric));

    /// <summary>Series of a metric (or of every metric when null), with their extent.</summary>
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

                    list.Add(InfoOf(timeline));
                }
            }
        }

        return list.OrderBy(s => s.Key.Canonical, StringComparer.Ordinal).ToArray();
    }

    /// <inheritdoc/>
    public ValueTask<SeriesInfo?> RemoveAsync(SeriesKey key, CancellationToken cancellationToken = default) => ValueTask.FromResult(Remove(key));

    /// <summary>Removes one series and all its buckets under its shard lock; returns what it held, or null when it did not exist.</summary>
    public SeriesInfo? Remove(SeriesKey key)
    {
        ArgumentNullException.ThrowIfNull(key);
        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            if (!shard.Series.Remove(key, out var timeline))
            {
                return null;
            }

            shard.EstimatedBytes -= timeline.EstimatedBytes;
            ReleaseSeries(key);
            SeriesInfo info = InfoOf(timeline);
            lock (timeline)
            {
                timeline.ReleaseAged();
            }

            return info;
        }
    }

    // The series' count and extent from its own buckets; call under its shard lock.
    private SeriesInfo InfoOf(SeriesTimeline timeline)
    {
        long count = 0;
        long from = long.MaxValue;
        long to = long.MinValue;
        for (int i = 0; i < timeline.Tiers.Count; i++)
        {
            long width = _options.Tiers[i].WidthMs;
            foreach (var (start, values) in timeline.Tiers[i].Select(b => (b.Key, b.Value.Count)).Concat(timeline.AgedCounts(i)))
            {
                count += values;
                from = Math.Min(from, start);
                to = Math.Max(to, start + width);
            }
        }

        return new SeriesInfo(timeline.Key, count, from <= to ? new TimeWindow(from, to) : default, timeline.BucketCount);
    }

    /// <inheritdoc/>
    public ValueTask<StoreStats> GetStatsAsync(CancellationToken cancellationToken = default) => ValueTask.FromResult(GetStats());

    /// <summary>Counts and estimated memory, per tier and per shard.</summary>
    public StoreStats GetStats()
    {
        var tierBuckets = new long[_options.Tiers.Count];
        var tierBytes = new long[_options.Tiers.Count];
        var shards = new PartitionStats[_shards.Length];
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
                        tierBuckets[i] += timeline.Tiers[i].Count + timeline.AgedStarts(i).Count;
                        tierBytes[i] += timeline.EstimatedBytesOfTier(i);
                    }

                    buckets += timeline.BucketCount;
                }

                series += shard.Series.Count;
                shards[s] = new PartitionStats(s, shard.Series.Count, buckets, shard.EstimatedBytes);
            }
        }

        var tiers = _options.Tiers.Select((t, i) => new TierStats(t.BucketWidth, tierBuckets[i], tierBytes[i])).ToArray();
        return new StoreStats(series, tierBuckets.Sum(), tierBytes.Sum(), tiers, shards, _producers.Count);
    }

    /// <inheritdoc/>
    public ValueTask RollAsync(CancellationToken cancellationToken = default)
    {
        Roll();
        return ValueTask.CompletedTask;
    }

    /// <inheritdoc/>
    public Task<SnapshotInfo?> WriteSnapshotAsync(CancellationToken cancellationToken = default) => Task.FromResult<SnapshotInfo?>(null);

    /// <summary>Rolls aged buckets into coarser tiers and drops those past retention, at the store clock's time.</summary>
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
                    lock (timeline)
                    {
                        shard.EstimatedBytes += timeline.Roll(now);
                    }

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

    private string TenantOf(SeriesKey key)
    {
        string? prefix = null;
        foreach (string candidate in _options.TenantPrefixes)
        {
            if (key.Metric.StartsWith(candidate, StringComparison.Ordinal) && candidate.Length > (prefix?.Length ?? -1))
            {
                prefix = candidate;
            }
        }

        if (prefix is not null)
        {
            return prefix;
        }

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

    /// <summary>Adds a new series to its shard and to the catalogue; call under the shard lock.</summary>
    private void AddSeries(SeriesShard shard, SeriesTimeline timeline)
    {
        shard.Series.Add(timeline.Key, timeline);
        _catalogue.Add(timeline);
    }

    /// <summary>Gives back a series' place in the limits and takes it out of the catalogue; call under the shard lock.</summary>
    private void ReleaseSeries(SeriesKey key)
    {
        _catalogue.Remove(key);
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
