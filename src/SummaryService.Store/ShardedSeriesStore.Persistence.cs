using SummaryService.Sketches;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;

namespace SummaryService.Store;

/// <summary>
/// The hooks persistence uses: journaling accepted batches, exporting shards, loading and replaying.
/// They speak in <see cref="LoggedWrite"/>s and <see cref="StoredBucket"/>s; how those are encoded
/// is the business of the <see cref="IBatchLog"/> and <see cref="ISnapshotStore"/> behind them.
/// </summary>
public sealed partial class ShardedSeriesStore
{
    /// <summary>Called under the shard lock for every applied batch; the returned task completes when the record is durable.</summary>
    internal Func<LoggedWrite, Task>? Journal { get; set; }

    /// <summary>Why writes are refused now (the data directory cannot be written), or null; asked before a batch changes anything.</summary>
    internal Func<string?>? WriteRefusal { get; set; }

    /// <summary>Completes once everything logged so far is durable: a repeated batch is acknowledged only when its first copy is.</summary>
    internal Func<Task>? DurableBarrier { get; set; }

    internal int ShardCount => _shards.Length;

    private void RefuseWhileStorageFails()
    {
        if (WriteRefusal?.Invoke() is { } reason)
        {
            throw new StorageUnavailableException($"batches are refused while the data directory cannot be written ({reason}); send again later.");
        }
    }

    // A failed log write leaves the batch applied in memory and queued for the log, but unacknowledged.
    private static async ValueTask AwaitDurableAsync(Task durable, CancellationToken cancellationToken)
    {
        try
        {
            await durable.WaitAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (IOException ex)
        {
            throw new StorageUnavailableException($"not acknowledged: the write-ahead log cannot write ({ex.InnerException?.Message ?? ex.Message}). The batch is written when the disk allows; send it again later with the same producer and sequence and it is counted once (without them it may be counted twice).", ex);
        }
    }

    internal ulong LastLsn => (ulong)Interlocked.Read(ref _lastLsn);

    /// <summary>
    /// Hands the shard's series to <paramref name="writer"/> under its lock; returns the shard's
    /// applied LSN and how many series it handed over. Buckets in segments go into
    /// <paramref name="segments"/> as references when given, else whole into the writer.
    /// </summary>
    internal (ulong AppliedLsn, int Series) ExportShard(int index, ISnapshotWriter writer, SegmentManifestBuilder? segments = null)
    {
        SeriesShard shard = _shards[index];
        var buckets = new List<StoredBucket>();
        lock (shard.Gate)
        {
            foreach (var (key, timeline) in shard.Series)
            {
                buckets.Clear();
                for (int tier = 0; tier < timeline.Tiers.Count; tier++)
                {
                    foreach (var (start, sketch) in timeline.Tiers[tier])
                    {
                        buckets.Add(new StoredBucket(tier, start, sketch));
                    }
                }

                lock (timeline)
                {
                    if (segments is null)
                    {
                        buckets.AddRange(timeline.LoadAged().Select(a => new StoredBucket(a.Tier, a.Start, a.Sketch)));
                    }
                    else
                    {
                        foreach (AgedBucket aged in timeline.AgedBuckets().Concat(timeline.AgedBlocks()))
                        {
                            segments.Mark(aged);
                        }

                        foreach (LostSpan lost in timeline.Lost)
                        {
                            segments.MarkLost(key, lost);
                        }
                    }
                }

                writer.AddSeries(key, buckets);
            }

            return (shard.AppliedLsn, shard.Series.Count);
        }
    }

    /// <summary>Puts a snapshot's series back; each bucket goes where the current tier layout puts its start time.</summary>
    internal int Load(SeriesKey key, IReadOnlyList<StoredBucket> buckets, ulong appliedLsn, bool sameTierLayout)
    {
        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            SeriesTimeline timeline = RecoveredTimeline(shard, key);

            long now = NowMs();
            lock (timeline)
            {
                foreach (StoredBucket bucket in buckets)
                {
                    shard.EstimatedBytes += timeline.Place(SavedTier(bucket, sameTierLayout), bucket.StartUnixMs, bucket.Sketch, now);
                }
            }

            shard.AppliedLsn = Math.Max(shard.AppliedLsn, appliedLsn);
            RaiseLsn(appliedLsn);
        }

        return buckets.Count;
    }

    /// <summary>Applies a logged batch unless the snapshot already holds it; values past retention are dropped and counted.</summary>
    internal void Replay(LoggedWrite record, Func<SeriesKey, ulong> snapshotLsn, RecoveryReport report)
    {
        SeriesKey key = record.Key;
        _producers.Import([new(record.Producer, new ProducerMark(record.Sequence, NowMs()))]);
        RaiseLsn(record.Lsn);
        if (record.Lsn <= snapshotLsn(key))
        {
            report.LogRecordsAlreadyInSnapshot++;
            return;
        }

        if (record.Sketch is { } sketch)
        {
            ReplayUpload(record, sketch, report);
            return;
        }

        long now = NowMs();
        long oldest = now - _options.TotalRetentionMs;
        var values = new List<double>(record.Values.Length);
        var times = new List<long>(record.Values.Length);
        for (int i = 0; i < record.Values.Length; i++)
        {
            long t = record.TimesUnixMs.Length == 1 ? record.TimesUnixMs[0] : record.TimesUnixMs[i];
            if (t < oldest || !double.IsFinite(record.Values[i]))
            {
                report.ValuesPastRetention++;
                continue;
            }

            values.Add(record.Values[i]);
            times.Add(t);
        }

        report.LogRecordsReplayed++;
        if (values.Count == 0)
        {
            return;
        }

        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            SeriesTimeline timeline = RecoveredTimeline(shard, key);

            lock (timeline)
            {
                shard.EstimatedBytes += timeline.Add(values.ToArray(), TimeRun.Of(times.ToArray()), now);
            }

            shard.AppliedLsn = Math.Max(shard.AppliedLsn, record.Lsn);
        }
    }

    /// <summary>The series' timeline, created without limit checks: recovery restores what was once accepted. Call under the shard lock.</summary>
    private SeriesTimeline RecoveredTimeline(SeriesShard shard, SeriesKey key)
    {
        if (!shard.Series.TryGetValue(key, out var timeline))
        {
            timeline = new SeriesTimeline(key, _options);
            ReserveSeries(key, enforceLimits: false);
            AddSeries(shard, timeline);
        }

        return timeline;
    }

    /// <summary>True when a snapshot's tier widths are this store's, so buckets can go back to their tiers.</summary>
    internal bool HasTierWidths(IReadOnlyList<long> widths) =>
        widths.SequenceEqual(_options.Tiers.Select(t => t.WidthMs));

    private int SavedTier(StoredBucket bucket, bool sameTierLayout)
    {
        bool aligned = bucket.Tier >= 0 && bucket.Tier < _options.Tiers.Count && SeriesTimeline.AlignDown(bucket.StartUnixMs, _options.Tiers[bucket.Tier].WidthMs) == bucket.StartUnixMs;
        return sameTierLayout && aligned ? bucket.Tier : -1;
    }

    private static LoggedWrite LogRecordOf(ulong lsn, SeriesKey key, SeriesBatch batch, TimeRun[] times)
    {
        // The log keeps the batch's own form: one time for the batch, or one per value.
        long[] resolved;
        if (batch.ValueTimesUnixMs.IsEmpty)
        {
            resolved = [times[0].TimeUnixMs];
        }
        else
        {
            resolved = new long[batch.Values.Length];
            int at = 0;
            foreach (TimeRun run in times)
            {
                resolved.AsSpan(at, run.Count).Fill(run.TimeUnixMs);
                at += run.Count;
            }
        }

        return new LoggedWrite(lsn, key, batch.Producer, batch.Sequence, batch.Values.ToArray(), resolved, Sketch: null);
    }

    private void RaiseLsn(ulong lsn)
    {
        long value = (long)lsn;
        long current;
        while ((current = Interlocked.Read(ref _lastLsn)) < value && Interlocked.CompareExchange(ref _lastLsn, value, current) != current)
        {
        }
    }
}
