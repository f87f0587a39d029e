using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Formats.Store;

namespace SummaryService.Store;

/// <summary>Merging client-side sketches into buckets, with the same checks, limits and journal as raw batches.</summary>
public sealed partial class ShardedSeriesStore
{
    /// <summary>
    /// Validates the upload completely, then merges its sketch into the bucket of its timestamp, or
    /// throws <see cref="StoreRejectedException"/> and changes nothing.
    /// </summary>
    public async ValueTask<AppendResult> MergeSketchAsync(SketchUpload upload, CancellationToken cancellationToken = default)
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
    private Task? ApplyUpload(SeriesShard shard, SeriesTimeline timeline, SketchUpload upload, long timeUnixMs, SeriesSketch sketch, long now)
    {
        ulong lsn = (ulong)Interlocked.Increment(ref _lastLsn);
        Task? durable = Journal?.Invoke(UploadRecordOf(lsn, upload, timeUnixMs, sketch));
        lock (timeline)
        {
            shard.EstimatedBytes += timeline.Place(-1, timeUnixMs, sketch, now);
        }

        shard.AppliedLsn = lsn;
        return durable;
    }

    /// <summary>Replays a logged upload; past retention it is dropped and its values counted as such.</summary>
    private void ReplayUpload(LogRecord record, RecoveryReport report)
    {
        var key = new SeriesKey(record.Metric, record.Labels);
        SeriesSketch sketch = SketchCodec.FromState(record.Sketch);
        long now = NowMs();
        long t = record.TimesUnixMs.Count > 0 ? record.TimesUnixMs[0] : now;
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

    private static LogRecord UploadRecordOf(ulong lsn, SketchUpload upload, long time, SeriesSketch sketch)
    {
        var record = new LogRecord { Lsn = lsn, Metric = upload.Metric, Producer = upload.Producer, Sequence = upload.Sequence, Sketch = SketchCodec.ToState(sketch), FormatVersion = LogSegments.FormatVersion };
        foreach (var (name, value) in upload.Labels)
        {
            record.Labels.Add(name, value);
        }

        record.TimesUnixMs.Add(time);
        return record;
    }
}
