using Google.Protobuf;
using SummaryService.Formats.V1;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Formats.Store;

namespace SummaryService.Store;

/// <summary>The hooks persistence uses: journaling accepted batches, exporting shards, loading and replaying.</summary>
public sealed partial class ShardedSeriesStore
{
    /// <summary>Called under the shard lock for every applied batch; the returned task completes when the record is durable.</summary>
    internal Func<LogRecord, Task>? Journal { get; set; }

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

    /// <summary>The shard's series as snapshot records, copied under its lock.</summary>
    internal (ulong AppliedLsn, List<byte[]> Series) ExportShard(int index)
    {
        SeriesShard shard = _shards[index];
        lock (shard.Gate)
        {
            // Each record is serialized at once: its message objects die young instead of piling up
            // (several times the serialized size) until the whole shard is written.
            var records = new List<byte[]>(shard.Series.Count);
            foreach (var (key, timeline) in shard.Series)
            {
                var record = new SeriesRecord { Metric = key.Metric };
                foreach (var (name, value) in key.Labels)
                {
                    record.Labels.Add(name, value);
                }

                for (int tier = 0; tier < timeline.Tiers.Count; tier++)
                {
                    foreach (var (start, sketch) in timeline.Tiers[tier])
                    {
                        record.Buckets.Add(new BucketRecord { Tier = (uint)tier, StartUnixMs = start, Sketch = SketchCodec.ToState(sketch) });
                    }
                }

                records.Add(record.ToByteArray());
            }

            return (shard.AppliedLsn, records);
        }
    }

    /// <summary>Puts a snapshot's series back; each bucket goes where the current tier layout puts its start time.</summary>
    internal int Load(SeriesRecord record, ulong appliedLsn, bool sameTierLayout)
    {
        var key = new SeriesKey(record.Metric, record.Labels);
        var sketches = record.Buckets.Select(b => (Tier: SavedTier(b, sameTierLayout), b.StartUnixMs, Sketch: SketchCodec.FromState(b.Sketch))).ToList();
        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            SeriesTimeline timeline = RecoveredTimeline(shard, key);

            long now = NowMs();
            lock (timeline)
            {
                foreach (var (tier, start, sketch) in sketches)
                {
                    shard.EstimatedBytes += timeline.Place(tier, start, sketch, now);
                }
            }

            shard.AppliedLsn = Math.Max(shard.AppliedLsn, appliedLsn);
            RaiseLsn(appliedLsn);
        }

        return sketches.Count;
    }

    /// <summary>Applies a logged batch unless the snapshot already holds it; values past retention are dropped and counted.</summary>
    internal void Replay(LogRecord record, Func<SeriesKey, ulong> snapshotLsn, RecoveryReport report)
    {
        var key = new SeriesKey(record.Metric, record.Labels);
        _producers.Import([new(record.Producer, new ProducerMark(record.Sequence, NowMs()))]);
        RaiseLsn(record.Lsn);
        if (record.Lsn <= snapshotLsn(key))
        {
            report.LogRecordsAlreadyInSnapshot++;
            return;
        }

        if (record.Sketch is not null)
        {
            ReplayUpload(record, report);
            return;
        }

        long now = NowMs();
        long oldest = now - _options.TotalRetentionMs;
        var values = new List<double>(record.Values.Count);
        var times = new List<long>(record.Values.Count);
        for (int i = 0; i < record.Values.Count; i++)
        {
            long t = record.TimesUnixMs.Count == 1 ? record.TimesUnixMs[0] : record.TimesUnixMs[i];
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

    private int SavedTier(BucketRecord bucket, bool sameTierLayout)
    {
        bool aligned = bucket.Tier < _options.Tiers.Count && SeriesTimeline.AlignDown(bucket.StartUnixMs, _options.Tiers[(int)bucket.Tier].WidthMs) == bucket.StartUnixMs;
        return sameTierLayout && aligned ? (int)bucket.Tier : -1;
    }

    private static LogRecord LogRecordOf(ulong lsn, SeriesBatch batch, TimeRun[] times)
    {
        var record = new LogRecord { Lsn = lsn, Metric = batch.Metric, Producer = batch.Producer, Sequence = batch.Sequence, FormatVersion = LogSegments.FormatVersion };
        foreach (var (name, value) in batch.Labels)
        {
            record.Labels.Add(name, value);
        }

        record.Values.AddRange(batch.Values.ToArray());

        // The log keeps the batch's own form: one time for the batch, or one per value.
        if (batch.ValueTimesUnixMs.IsEmpty)
        {
            record.TimesUnixMs.Add(times[0].TimeUnixMs);
        }
        else
        {
            foreach (TimeRun run in times)
            {
                for (int i = 0; i < run.Count; i++)
                {
                    record.TimesUnixMs.Add(run.TimeUnixMs);
                }
            }
        }

        return record;
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
