using System.Diagnostics;
using Microsoft.Extensions.Logging;
using SummaryService.Readable;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Summaries;
using SummaryService.Store.Persistence;
using SummaryService.Formats.Store;

namespace SummaryService.Store;

/// <summary>
/// A <see cref="ShardedSeriesStore"/> kept on disk: snapshot generations plus a write-ahead log.
/// Start-up loads the newest valid snapshot (falling back to older ones) and replays the log;
/// accepted batches are logged and fsynced before they are acknowledged when durability is
/// <see cref="DurabilityMode.Wal"/>.
/// </summary>
public sealed class PersistentSeriesStore : ISeriesStore, IAsyncDisposable
{
    private readonly PersistenceOptions _persistence;
    private readonly TimeProvider _time;
    private readonly ILogger _logger;
    private readonly WriteAheadLog? _log;
    private readonly SemaphoreSlim _snapshotGate = new(1, 1);
    private readonly object _snapshotRequests = new();
    private readonly IDataFiles _files;
    private volatile string? _snapshotTrouble;
    private TaskCompletionSource<SnapshotInfo>? _nextSnapshot;
    private readonly List<(ulong Generation, ulong LogStart)> _kept;
    private ulong _nextGeneration;
    private bool _disposed;

    private PersistentSeriesStore(ShardedSeriesStore inner, PersistenceOptions persistence, TimeProvider time, ILogger logger, RecoveryReport recovery, List<(ulong, ulong)> kept, ulong nextGeneration, Action<TimeSpan>? logSyncObserved, IDataFiles files)
    {
        Inner = inner;
        _files = files;
        _persistence = persistence;
        _time = time;
        _logger = logger;
        Recovery = recovery;
        _kept = kept;
        _nextGeneration = nextGeneration;
        if (persistence.Durability == DurabilityMode.Wal)
        {
            _log = new WriteAheadLog(LogDirectory(persistence), inner.LastLsn + 1, persistence.LogSyncInterval, logger, files, logSyncObserved);
            inner.Journal = _log.Append;
            inner.DurableBarrier = _log.Barrier;
        }

        inner.WriteRefusal = () => WriteTrouble;
    }

    /// <summary>
    /// Why writes are refused now, or null: with a log, the log cannot write; with snapshots only,
    /// the last snapshot failed (an acknowledged batch could then be lost beyond the promised interval).
    /// </summary>
    public string? WriteTrouble => _log is not null ? _log.Trouble : _snapshotTrouble;

    /// <summary>Why the last snapshot failed, or null; with a log nothing acknowledged is at risk, but the log grows until one works.</summary>
    public string? SnapshotTrouble => _snapshotTrouble;

    /// <summary>The in-memory store underneath.</summary>
    public ShardedSeriesStore Inner { get; }

    /// <summary>What start-up recovered and dropped.</summary>
    public RecoveryReport Recovery { get; }

    /// <summary>Called with the duration of each snapshot; for telemetry.</summary>
    public Action<TimeSpan>? SnapshotObserved { get; set; }

    /// <summary>Opens the store in <see cref="PersistenceOptions.DataDirectory"/>, recovering whatever is there.</summary>
    public static PersistentSeriesStore Open(StoreOptions options, PersistenceOptions persistence, TimeProvider time, ILogger logger, Action<TimeSpan>? logSyncObserved = null, IDataFiles? files = null)
    {
        ArgumentNullException.ThrowIfNull(persistence);
        var report = new RecoveryReport();
        string snapshots = SnapshotDirectory(persistence);
        Directory.CreateDirectory(snapshots);
        Directory.CreateDirectory(LogDirectory(persistence));

        ShardedSeriesStore? store = null;
        SnapshotManifest? loaded = null;
        var onDisk = SnapshotFiles.List(snapshots);
        foreach (var (generation, path) in onDisk)
        {
            if (TryLoad(path, options, time, out store, out loaded, report, out string? problem))
            {
                report.SnapshotGeneration = generation;
                break;
            }

            report.SnapshotsRejected.Add($"{generation}: {problem}");
            logger.LogWarning("Snapshot {Generation} is unusable ({Problem}); trying an older one.", generation, problem);
        }

        // No whole generation: the valid part of the newest beats starting empty.
        if (store is null && onDisk.Count > 0 && TryLoad(onDisk[0].Path, options, time, out store, out loaded, report, out _, salvage: true))
        {
            report.SnapshotGeneration = onDisk[0].Generation;
            report.SnapshotSalvaged = true;
            logger.LogWarning("Snapshot {Generation} was salvaged in part: {Losses}", onDisk[0].Generation, string.Join("; ", report.Warnings));
        }

        store ??= new ShardedSeriesStore(options, time);
        Func<SeriesKey, ulong> snapshotLsn = loaded is null
            ? _ => 0
            : key => loaded.ShardLsns[(int)(key.Hash & (ulong)(loaded.ShardCount - 1))];
        foreach (LogRecord record in LogSegments.ReadAll(LogDirectory(persistence), logger, report))
        {
            try
            {
                store.Replay(record, snapshotLsn, report);
            }
            catch (Exception ex) when (ex is SketchFormatException or ArgumentException or InvalidOperationException or IndexOutOfRangeException or OverflowException)
            {
                // A record whose frame checks out but whose content cannot be applied: skipped, and said so.
                report.LogRecordsUnusable++;
                report.Warnings.Add($"log record {record.Lsn} of {record.Metric} skipped: {ex.Message}");
                logger.LogWarning("Write-ahead log record {Lsn} skipped: {Reason}", record.Lsn, ex.Message);
            }
        }

        var kept = onDisk.Select(g => (g.Generation, LogStart: ReadLogStart(g.Path))).Where(g => g.LogStart.HasValue).Select(g => (g.Generation, g.LogStart!.Value)).ToList();
        ulong next = onDisk.Count == 0 ? 1 : onDisk[0].Generation + 1;
        logger.LogInformation("Recovered series store from {Directory}: {Report}.", persistence.DataDirectory, report);
        return new PersistentSeriesStore(store, persistence, time, logger, report, kept, next, logSyncObserved, files ?? new LocalDataFiles());
    }

    /// <inheritdoc/>
    public ValueTask<AppendResult> AppendAsync(SeriesBatch batch, CancellationToken cancellationToken = default) => Inner.AppendAsync(batch, cancellationToken);

    /// <inheritdoc/>
    public ValueTask<AppendResult> MergeSketchAsync(SketchUpload upload, CancellationToken cancellationToken = default) => Inner.MergeSketchAsync(upload, cancellationToken);

    /// <inheritdoc/>
    public WindowSummary Summarize(Selector selector, TimeRange window, IReadOnlyList<string> groupBy, SummaryOptions options) => Inner.Summarize(selector, window, groupBy, options);

    /// <inheritdoc/>
    public IReadOnlyList<WindowSummary> SummarizeSteps(Selector selector, TimeRange window, long stepMs, IReadOnlyList<string> groupBy, SummaryOptions options) =>
        Inner.SummarizeSteps(selector, window, stepMs, groupBy, options);

    /// <inheritdoc/>
    public IReadOnlyList<SeriesInfo> ListSeries(string? metric = null) => Inner.ListSeries(metric);

    /// <inheritdoc/>
    public bool Delete(SeriesKey key) => Inner.Delete(key);

    /// <inheritdoc/>
    public StoreStats GetStats() => Inner.GetStats();

    /// <inheritdoc/>
    public void Roll() => Inner.Roll();

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
        if (_log is not null)
        {
            await _log.RotateAsync(logStart).ConfigureAwait(false);
        }

        ulong generation = _nextGeneration++;
        var manifest = new SnapshotManifest
        {
            FormatVersion = SnapshotFiles.FormatVersion,
            Generation = generation,
            CreatedUnixMs = _time.GetUtcNow().ToUnixTimeMilliseconds(),
            ShardCount = (uint)Inner.ShardCount,
            LogStart = logStart,
        };
        foreach (var (producer, mark) in producers)
        {
            manifest.Producers[producer] = mark.Highest;
            manifest.ProducersLastSeenUnixMs[producer] = mark.LastSeenUnixMs;
        }

        int series = 0;
        string directory;
        using (var writer = SnapshotWriter.Begin(SnapshotDirectory(_persistence), generation, _files))
        {
            for (int i = 0; i < Inner.ShardCount; i++)
            {
                var (lsn, records) = Inner.ExportShard(i);
                manifest.ShardLsns.Add(lsn);
                series += records.Count;
                var header = new ShardHeader { FormatVersion = SnapshotFiles.FormatVersion, Generation = generation, Shard = (uint)i, ShardCount = (uint)Inner.ShardCount, AppliedLsn = lsn };
                header.TierWidthsMs.AddRange(Inner.Options.Tiers.Select(t => t.WidthMs));
                await Task.Run(() => writer.WriteShard(header, records)).ConfigureAwait(false);
            }

            directory = writer.Complete(manifest);
        }

        _kept.Insert(0, (generation, logStart));
        SnapshotFiles.Prune(SnapshotDirectory(_persistence), _persistence.SnapshotsKept, _logger);
        _kept.RemoveRange(Math.Min(_kept.Count, _persistence.SnapshotsKept), Math.Max(0, _kept.Count - _persistence.SnapshotsKept));
        LogSegments.DeleteBefore(LogDirectory(_persistence), _kept.Min(k => k.LogStart), _logger);
        long bytes = Directory.EnumerateFiles(directory).Sum(f => new FileInfo(f).Length);
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

        if (_log is not null)
        {
            await _log.DisposeAsync().ConfigureAwait(false);
        }

        _snapshotGate.Dispose();
    }

    /// <summary>Closes the log without a final snapshot, as a crash right after the last fsync would leave things.</summary>
    internal async ValueTask CloseWithoutSnapshotAsync()
    {
        _disposed = true;
        if (_log is not null)
        {
            await _log.DisposeAsync().ConfigureAwait(false);
        }

        _snapshotGate.Dispose();
    }

    private static bool TryLoad(string path, StoreOptions options, TimeProvider time, out ShardedSeriesStore? store, out SnapshotManifest? manifest, RecoveryReport report, out string? problem, bool salvage = false)
    {
        store = null;
        problem = null;
        bool read = salvage
            ? SnapshotFiles.TrySalvage(path, out manifest, out var shards, report.Warnings)
            : SnapshotFiles.TryRead(path, out manifest, out shards, out problem);
        if (!read)
        {
            return false;
        }

        var candidate = new ShardedSeriesStore(options, time);
        int series = 0;
        int buckets = 0;
        try
        {
            foreach (var (header, records) in shards)
            {
                bool sameLayout = candidate.HasTierWidths(header.TierWidthsMs);
                foreach (SeriesRecord record in records)
                {
                    try
                    {
                        buckets += candidate.Load(record, header.AppliedLsn, sameLayout);
                        series++;
                    }
                    catch (Exception ex) when (salvage && ex is SketchFormatException or ArgumentException)
                    {
                        report.Warnings.Add($"series {record.Metric} of shard {header.Shard} skipped: {ex.Message}");
                    }
                }
            }
        }
        catch (Exception ex) when (ex is SketchFormatException or ArgumentException)
        {
            problem = $"invalid series record: {ex.Message}";
            return false;
        }

        candidate.Producers.Import(MarksOf(manifest!));
        report.SnapshotSeries = series;
        report.SnapshotBuckets = buckets;
        store = candidate;
        return true;
    }

    private static ulong? ReadLogStart(string path) =>
        SnapshotFiles.TryRead(path, out var manifest, out _, out _) ? manifest!.LogStart : null;

    private static string SnapshotDirectory(PersistenceOptions p) => Path.Combine(p.DataDirectory, "snapshots");

    private static string LogDirectory(PersistenceOptions p) => Path.Combine(p.DataDirectory, "wal");

    // Snapshots written before last-seen times were kept count their producers as heard from at creation.
    private static IEnumerable<KeyValuePair<string, ProducerMark>> MarksOf(SnapshotManifest manifest)
    {
        foreach (var (producer, highest) in manifest.Producers)
        {
            long seen = manifest.ProducersLastSeenUnixMs.TryGetValue(producer, out long at) ? at : manifest.CreatedUnixMs;
            yield return KeyValuePair.Create(producer, new ProducerMark(highest, seen));
        }
    }
}

/// <summary>One snapshot written.</summary>
public sealed record SnapshotInfo(ulong Generation, int Series, long Bytes, TimeSpan Elapsed);
