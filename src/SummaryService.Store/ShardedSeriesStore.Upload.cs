using SummaryService.Sketches;
using SummaryService.Store.Persistence;

namespace SummaryService.Store;

/// <summary>Merging client-side sketches into buckets, with the same checks, limits and journal as raw batches.</summary>
public sealed partial class ShardedSeriesStore
{
    /// <summary>
    /// Validates the upload completely, then merges its sketch into the bucket of its timestamp, or
    /// throws <see cref="StoreRejectedException"/> and changes nothing.
    /// </summary>
    public async ValueTask<AppendResult> MergeSketchAsync(UploadedSketch upload, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(upload);
        ArgumentNullException.ThrowIfNull(upload.Sketch);
        long now = NowMs();
        RequireCompatible(upload.Sketch);

        // The name, label and time rules are the batch rules: one stand-in value carries the timestamp.
        TimeRun[] times = _validator.Validate(new SeriesBatch { Metric = upload.Metric, Labels = upload.Labels, Values = new double[] { 0 }, TimeUnixMs = upload.TimeUnixMs }, now);
        RefuseWhileStorageFails();
        var key = new SeriesKey(upload.Metric, upload.Labels);
        SeriesSketch sketch = upload.Sketch.Clone();
        SeriesShard shard = ShardOf(key);
        Task? durable;
        bool duplicate;
        lock (shard.Gate)
        {
            var timeline = Admit(shard, key, t => t.NewBucketsFor(times, now) > 0 ? sketch.EstimatedBytes : 0, "sketch", upload.Producer, upload.Sequence);
            duplicate = timeline is null;
            durable = duplicate ? DurableBarrier?.Invoke() : ApplyUpload(shard, timeline!, upload, times[0].TimeUnixMs, sketch, now);
        }

        if (durable is not null)
        {
            await AwaitDurableAsync(durable, cancellationToken).ConfigureAwait(false);
        }

        return duplicate ? new AppendResult(0, Duplicate: true) : new AppendResult(upload.Sketch.Count, Duplicate: false);
    }

    // Under the shard lock, like a batch: the next LSN, the log record, the sketch into its bucket.
    private Task? ApplyUpload(SeriesShard shard, SeriesTimeline timeline, UploadedSketch upload, long timeUnixMs, SeriesSketch sketch, long now)
    {
        ulong lsn = (ulong)Interlocked.Increment(ref _lastLsn);
        Task? durable = Journal?.Invoke(new LoggedWrite(lsn, timeline.Key, upload.Producer, upload.Sequence, [], [timeUnixMs], sketch));
        lock (timeline)
        {
            shard.EstimatedBytes += timeline.Place(-1, timeUnixMs, sketch, now);
        }

        shard.AppliedLsn = lsn;
        return durable;
    }

    /// <summary>Replays a logged upload; past retention it is dropped and its values counted as such.</summary>
    private void ReplayUpload(LoggedWrite record, SeriesSketch sketch, RecoveryReport report)
    {
        SeriesKey key = record.Key;
        long now = NowMs();
        long t = record.TimesUnixMs.Length > 0 ? record.TimesUnixMs[0] : now;
        report.LogRecordsReplayed++;
        if (t < now - _options.TotalRetentionMs)
        {
            report.ValuesPastRetention += sketch.Count;
            return;
        }

        SeriesShard shard = ShardOf(key);
        lock (shard.Gate)
        {
            SeriesTimeline timeline = RecoveredTimeline(shard, key);

            lock (timeline)
            {
                shard.EstimatedBytes += timeline.Place(-1, t, sketch, now);
            }

            shard.AppliedLsn = Math.Max(shard.AppliedLsn, record.Lsn);
        }
    }

    private void RequireCompatible(SeriesSketch sketch)
    {
        if (sketch.Count == 0)
        {
            throw new StoreRejectedException(RejectReason.InvalidSketch, "sketch", "sketch holds no values; upload a sketch of at least one value.");
        }

        SeriesSketchOptions expected = _options.Sketch;
        // Read from the settings, not the parts, so that checking a small sketch does not grow it.
        SeriesSketchOptions given = sketch.Options;
        if (given.ModeResolution.CompareTo(expected.ModeResolution) != 0 || given.ModeWidth != expected.ModeWidth || given.ModeDepth != expected.ModeDepth)
        {
            throw new StoreRejectedException(
                RejectReason.InvalidSketch,
                "sketch.modes",
                $"sketch.modes has resolution {given.ModeResolution} and a {given.ModeWidth}x{given.ModeDepth} table; this store uses resolution {expected.ModeResolution} and {expected.ModeWidth}x{expected.ModeDepth}.");
        }
    }
}
