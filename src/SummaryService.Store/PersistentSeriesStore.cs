using System.Diagnostics;
using Microsoft.Extensions.Logging;
using SummaryService.Readable;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;

namespace SummaryService.Store;

/// <summary>
/// A <see cref="ShardedSeriesStore"/> kept durable: snapshot generations in an <see cref="ISnapshotStore"/>
/// plus a batch log (<see cref="IBatchLog"/>); files by default, any other medium through the two interfaces.
/// Start-up loads the newest valid snapshot (falling back to older ones) and replays the log;
/// accepted batches are logged and fsynced before they are acknowledged when durability is
/// <see cref="DurabilityMode.Wal"/>.
/// </summary>
public sealed class PersistentSeriesStore : ISeriesStore, IStoreMaintenance, IAsyncDisposable
{
    private readonly PersistenceOptions _persistence;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly IBatchLog _log;
    private readonly ISnapshotStore _snapshots;
    private readonly bool _logging;
    private readonly SemaphoreSlim _snapshotGate = new(1, 1);
    private readonly object _snapshotRequests = new();
    private volatile string? _snapshotTrouble;
    private TaskCompletionSource<SnapshotInfo>? _nextSnapshot;
    private readonly List<(ulong Generation, ulong LogStart)> _kept;
    private ulong _nextGeneration;
    private bool _disposed;

    private PersistentSeriesStore(ShardedSeriesStore inner, PersistenceOptions persistence, TimeProvider time, ILogger logger, RecoveryReport recovery, List<(ulong, ulong)> kept, ulong nextGeneration, IBatchLog log, ISnapshotStore snapshots)
    {
        Inner = inner;
        _log = log;
        _snapshots = snapshots;
        _persistence = persistence;
        _time = time;
        _logger = logger;
        Recovery = recovery;
        _kept = kept;
        _nextGeneration = nextGeneration;
        _logging = persistence.Durability == DurabilityMode.Wal;
        if (_logging)
        {
            log.Start(inner.LastLsn + 1);
            inner.Journal = log.Append;
            inner.DurableBarrier = _log.Barrier;
        }

        inner.WriteRefusal = () => WriteTrouble;
    }

    /// <summary>
    /// Why writes are refused now, or null: with a log, the log cannot write; with snapshots only,
    /// the last snapshot failed (an acknowledged batch could then be lost beyond the promised interval).
    /// </summary>
    public string? WriteTrouble => _logging ? _log.Trouble : _snapshotTrouble;

    /// <summary>Why the last snapshot failed, or null; with a log nothing acknowledged is at risk, but the log grows until one works.</summary>
    public string? SnapshotTrouble => _snapshotTrouble;

    /// <summary>The in-memory store underneath.</summary>
    public ShardedSeriesStore Inner { get; }

    /// <summary>What start-up recovered and dropped.</summary>
    public RecoveryReport Recovery { get; }

    /// <summary>Called with the duration of each snapshot; for telemetry.</summary>
    public Action<TimeSpan>? SnapshotObserved { get; set; }

    /// <summary>Opens the store in <see cref="PersistenceOptions.DataDirectory"/> (snapshot and log files), recovering whatever is there.</summary>
    /// <param name="options">Tiers, limits and sketch settings.</param>
    /// <param name="persistence">Data directory, durability and snapshot settings.</param>
    /// <param name="time">The store's clock.</param>
    /// <param name="logger">Where recovery and persistence trouble is told.</param>
    /// <param name="logSyncObserved">Called with the duration of each log sync; for telemetry.</param>
    /// <param name="files">Every write to the data directory goes through it; local files when null.</param>
    /// <param name="producers">The producer ledger the store fills and recovery restores; a fresh one when null.</param>
    public static PersistentSeriesStore Open(StoreOptions options, PersistenceOptions persistence, TimeProvider time, ILogger logger, Action<TimeSpan>? logSyncObserved = null, IDataFiles? files = null, IProducerLedger? producers = null)
    {
        ArgumentNullException.ThrowIfNull(persistence);
        files ??= new LocalDataFiles();
        var log = new FileBatchLog(Path.Combine(persistence.DataDirectory, "wal"), persistence.LogSyncInterval, logger, files, logSyncObserved);
        var snapshots = new FileSnapshotStore(Path.Combine(persistence.DataDirectory, "snapshots"), files, logger);
        SegmentShelf? shelf = persistence.Segments is { } segments ? new SegmentShelf(Path.Combine(persistence.DataDirectory, "segments"), segments, files) : null;
        return Open(options, persistence, log, snapshots, time, logger, producers, shelf);
    }

    /// <summary>
    /// Opens the store on any medium: loads the newest usable snapshot generation (falling back to
    /// older ones, then to the valid part of the newest), replays the log after it, and from then on
    /// logs and snapshots through the same two interfaces. The store owns both from here on.
    /// </summary>
    public static PersistentSeriesStore Open(StoreOptions options, PersistenceOptions persistence, IBatchLog log, ISnapshotStore snapshots, TimeProvider time, ILogger logger, IProducerLedger? producers = null) =>
        Open(options, persistence, log, snapshots, time, logger, producers, segments: null);

    // With segments, a generation's aged buckets come back from the segment files its manifest lists.
    private static PersistentSeriesStore Open(StoreOptions options, PersistenceOptions persistence, IBatchLog log, ISnapshotStore snapshots, TimeProvider time, ILogger logger, IProducerLedger? producers, SegmentShelf? segments)
    {
        ArgumentNullException.ThrowIfNull(persistence);
        ArgumentNullException.ThrowIfNull(log);
        ArgumentNullException.ThrowIfNull(snapshots);
        var report = new RecoveryReport();
        if (segments is not null)
        {
            segments.Damaged = (file, problem) => logger.LogWarning("Segment {Segment} is damaged ({Problem}): its buckets are left out of answers, and windows over them say they cover less.", file, problem);
        }

        ShardedSeriesStore? store = null;
        SnapshotMark? loaded = null;
        var onDisk = snapshots.Generations();
        foreach (ulong generation in onDisk)
        {
            if (TryLoad(snapshots, segments, generation, options, time, producers, out store, out loaded, report, out string? problem))
            {
                report.SnapshotGeneration = generation;
                break;
            }

            report.SnapshotsRejected.Add($"{generation}: {problem}");
            logger.LogWarning("Snapshot {Generation} is unusable ({Problem}); trying an older one.", generation, problem);
        }

        // No whole generation: the valid part of the newest beats starting empty.
        if (store is null && onDisk.Count > 0 && TryLoad(snapshots, segments, onDisk[0], options, time, producers, out store, out loaded, report, out _, salvage: true))
        {
            report.SnapshotGeneration = onDisk[0];
            report.SnapshotSalvaged = true;
            logger.LogWarning("Snapshot {Generation} was salvaged in part: {Losses}", onDisk[0], string.Join("; ", report.Warnings));
        }

        store ??= new ShardedSeriesStore(options, time, producers);
        if (segments is not null)
        {
            segments.KeepOnly(onDisk);
            store.Segments = segments;
        }

        Func<SeriesKey, ulong> snapshotLsn = loaded is null ? _ => 0 : loaded.LsnOf;
        foreach (LoggedWrite record in log.ReadAll(report))
        {
            try
            {
                store.Replay(record, snapshotLsn, report);
            }
            catch (Exception ex) when (RecoveryReport.IsUnusableContent(ex))
            {
                // A record whose frame checks out but whose content cannot be applied: skipped, and said so.
                report.SkipRecord(record.Lsn, record.Key.Metric, ex.Message, logger);
            }
        }

        var kept = onDisk.Select(g => (Generation: g, LogStart: LogStartOf(snapshots, g))).Where(g => g.LogStart.HasValue).Select(g => (g.Generation, g.LogStart!.Value)).ToList();
        ulong next = onDisk.Count == 0 ? 1 : onDisk[0] + 1;
        logger.LogInformation("Recovered series store from {Directory}: {Report}.", persistence.DataDirectory, report);
        return new PersistentSeriesStore(store, persistence, time, logger, report, kept, next, log, snapshots);
    }

    /// <inheritdoc/>
    public ValueTask<AppendResult> AppendAsync(SeriesBatch batch, CancellationToken cancellationToken = default) => Inner.AppendAsync(batch, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<AppendResult> MergeSketchAsync(UploadedSketch upload, CancellationToken cancellationToken = default) => Inner.MergeSketchAsync(upload, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default) =>
        Inner.ReadAsync(selector, window, groupBy, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<IReadOnlyList<WindowSketches>> ReadStepsAsync(SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default) =>
        Inner.ReadStepsAsync(selector, window, stepMs, groupBy, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<IReadOnlyList<SeriesInfo>> ListSeriesAsync(string? metric = null, CancellationToken cancellationToken = default) => Inner.ListSeriesAsync(metric, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<SeriesInfo?> RemoveAsync(SeriesKey key, CancellationToken cancellationToken = default) => Inner.RemoveAsync(key, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<StoreStats> GetStatsAsync(CancellationToken cancellationToken = default) => Inner.GetStatsAsync(cancellationToken);

    /// <inheritdoc/>
    public DurabilityMode Durability => _persistence.Durability;

    /// <inheritdoc/>
    public ValueTask RollAsync(CancellationToken cancellationToken = default)
    {
        Roll();
        return ValueTask.CompletedTask;
    }

    /// <inheritdoc/>
    public async Task<SnapshotInfo?> WriteSnapshotAsync(CancellationToken cancellationToken = default) =>
        Durability == DurabilityMode.None ? null : await TakeSnapshotAsync(cancellationToken).ConfigureAwait(false);

    /// <summary>Counts and estimated memory, per tier and per shard (synchronous, for in-process callers).</summary>
    public StoreStats GetStats() => Inner.GetStats();

    /// <summary>Rolls aged buckets at the store clock's time (synchronous, for in-process callers).</summary>
    public void Roll()
    {
        Inner.Roll();
        try
        {
            Inner.MoveAgedBuckets();
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            _logger.LogWarning(ex, "Aged buckets stay in memory for now: a segment could not be written ({Problem}).", ex.Message);
        }
    }

    /// <summary>
    /// Writes a new snapshot generation, prunes old ones and the log segments they no longer need.
    /// Requests arriving while a snapshot is being written share the next one, which starts when it
    /// ends and so holds everything acknowledged before any of them asked: however many requests
    /// come in, at most one snapshot runs and one waits.
    /// </summary>
    public Task<SnapshotInfo> TakeSnapshotAsync(CancellationToken cancellationToken = default)
    {
        TaskCompletionSource<SnapshotInfo> next;
        bool start = false;
        lock (_snapshotRequests)
        {
            if (_nextSnapshot is null)
            {
                _nextSnapshot = new TaskCompletionSource<SnapshotInfo>(TaskCreationOptions.RunContinuationsAsynchronously);
                start = true;
            }

            next = _nextSnapshot;
        }

        if (start)
        {
            _ = WriteWhenFreeAsync(next);
        }

        return next.Task.WaitAsync(cancellationToken);
    }

    private async Task WriteWhenFreeAsync(TaskCompletionSource<SnapshotInfo> next)
    {
        await _snapshotGate.WaitAsync().ConfigureAwait(false);
        try
        {
            lock (_snapshotRequests)
            {
                // From here on, new requests wait for the snapshot after this one.
                _nextSnapshot = null;
            }

            next.TrySetResult(await WriteSnapshotAsync().ConfigureAwait(false));
            _snapshotTrouble = null;
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            _snapshotTrouble = $"the last snapshot could not be written: {ex.Message}";
            next.TrySetException(new StorageUnavailableException(_snapshotTrouble, ex));
        }
        catch (Exception ex)
        {
            next.TrySetException(ex);
        }
        finally
        {
            _snapshotGate.Release();
        }
    }

    private async Task<SnapshotInfo> WriteSnapshotAsync()
    {
        var watch = Stopwatch.StartNew();

        // Producer marks first: every sequence they cover is then in a shard export or in the log after it.
        var producers = Inner.Producers.Export();
        ulong logStart = Inner.LastLsn + 1;
        await _log.RotateAsync(logStart).ConfigureAwait(false);

        ulong generation = _nextGeneration++;
        long created = _time.GetUtcNow().ToUnixTimeMilliseconds();
        long[] tierWidths = Inner.Options.Tiers.Select(t => t.WidthMs).ToArray();
        var shardLsns = new ulong[Inner.ShardCount];
        SegmentManifestBuilder? segments = Inner.Segments?.BeginManifest();
        int series = 0;
        long bytes;
        using (ISnapshotWriter writer = _snapshots.Begin(generation))
        {
            for (int i = 0; i < shardLsns.Length; i++)
            {
                var (lsn, count) = Inner.ExportShard(i, writer, segments);
                shardLsns[i] = lsn;
                series += count;
                await writer.EndShardAsync(new ShardMark(i, shardLsns.Length, lsn, tierWidths)).ConfigureAwait(false);
            }

            if (segments is not null)
            {
                Inner.Segments!.WriteManifest(generation, segments);
            }

            bytes = writer.Complete(new SnapshotMark(generation, created, shardLsns, logStart, producers));
        }

        _kept.Insert(0, (generation, logStart));
        _snapshots.Prune(_persistence.SnapshotsKept);
        Inner.Segments?.KeepOnly([.. _snapshots.Generations()]);
        _kept.RemoveRange(Math.Min(_kept.Count, _persistence.SnapshotsKept), Math.Max(0, _kept.Count - _persistence.SnapshotsKept));
        _log.DeleteBefore(_kept.Min(k => k.LogStart));
        watch.Stop();
        SnapshotObserved?.Invoke(watch.Elapsed);
        _logger.LogDebug("Snapshot {Generation}: {Series} series, {Bytes} bytes in {Elapsed}.", generation, series, bytes, DurationText.Format(TimeSpan.FromMilliseconds(watch.ElapsedMilliseconds)));
        return new SnapshotInfo(generation, series, bytes, watch.Elapsed);
    }

    /// <summary>Takes a final snapshot (unless durability is none) and closes the log.</summary>
    public async ValueTask DisposeAsync()
    {
        if (_disposed)
        {
            return;
        }

        _disposed = true;
        if (_persistence.Durability != DurabilityMode.None)
        {
            // Periodic snapshots log at Debug; the one at shutdown is what an operator looks for.
            SnapshotInfo final = await TakeSnapshotAsync().ConfigureAwait(false);
            _logger.LogInformation("Snapshot {Generation}: {Series} series, {Bytes} bytes in {Elapsed}, written at shutdown.", final.Generation, final.Series, final.Bytes, DurationText.Format(final.Elapsed));
        }

        await _log.DisposeAsync().ConfigureAwait(false);
        _snapshotGate.Dispose();
        Inner.Segments?.Dispose();
    }

    /// <summary>Closes the log without a final snapshot, as a crash right after the last fsync would leave things.</summary>
    internal async ValueTask CloseWithoutSnapshotAsync()
    {
        _disposed = true;
        await _log.DisposeAsync().ConfigureAwait(false);
        _snapshotGate.Dispose();
        Inner.Segments?.Dispose();
    }

    private static bool TryLoad(ISnapshotStore snapshots, SegmentShelf? segments, ulong generation, StoreOptions options, TimeProvider time, IProducerLedger? producers, out ShardedSeriesStore? store, out SnapshotMark? mark, RecoveryReport report, out string? problem, bool salvage = false)
    {
        store = null;
        mark = null;
        if (!snapshots.TryRead(generation, salvage, report, out SnapshotImage? image, out problem))
        {
            return false;
        }

        // Loading series touches no producer mark, so a rejected candidate leaves the ledger as it was.
        var candidate = new ShardedSeriesStore(options, time, producers);
        int series = 0;
        int buckets = 0;
        try
        {
            foreach (ShardImage shard in image!.Shards)
            {
                bool sameLayout = candidate.HasTierWidths(shard.Mark.TierWidthsMs);
                foreach (SeriesImage record in shard.Series)
                {
                    try
                    {
                        var (key, stored) = record.Decode();
                        buckets += candidate.Load(key, stored, shard.Mark.AppliedLsn, sameLayout);
                        series++;
                    }
                    catch (Exception ex) when (salvage && ex is SketchFormatException or ArgumentException)
                    {
                        report.Warnings.Add($"series {record.Metric} of shard {shard.Mark.Shard} skipped: {ex.Message}");
                    }
                }
            }
        }
        catch (Exception ex) when (ex is SketchFormatException or ArgumentException)
        {
            problem = $"invalid series record: {ex.Message}";
            return false;
        }

        if (segments is not null && !segments.TryRestore(generation, report, candidate.PlaceAged, candidate.PlaceLost, (shard, span) => candidate.LoseShardSpan(image.Shards.All(s => s.Mark.ShardCount == candidate.ShardCount) ? shard : null, span), out string? segmentProblem))
        {
            if (!salvage)
            {
                problem = segmentProblem;
                return false;
            }

            report.Warnings.Add($"aged buckets in segments are missing: {segmentProblem}");
        }

        candidate.Producers.Import(image.Mark.Producers);
        report.SnapshotSeries = series;
        report.SnapshotBuckets = buckets;
        store = candidate;
        mark = image.Mark;
        return true;
    }

    private static ulong? LogStartOf(ISnapshotStore snapshots, ulong generation) =>
        snapshots.TryRead(generation, salvage: false, new RecoveryReport(), out SnapshotImage? image, out _) ? image!.Mark.LogStart : null;
}
