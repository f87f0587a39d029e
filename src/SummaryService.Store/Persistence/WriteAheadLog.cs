using Microsoft.Extensions.Logging;
using SummaryService.Readable;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Appends accepted batches to log segments and makes them durable with group commit: one
/// background loop writes whatever has accumulated, fsyncs, and releases every waiter of that
/// group, then waits out the sync interval so that fsyncs happen at most once per interval.
/// </summary>
/// <remarks>
/// When a write or fsync fails (disk full, read-only, failing), that group's waiters fail at once,
/// <see cref="Trouble"/> says why, and the store refuses new batches. The failed bytes are kept:
/// every <see cref="RetryInterval"/> the loop cuts the segment back to what was last known durable
/// and writes them again, so a batch that was applied in memory but not acknowledged reaches the
/// log once the disk allows, and the log never holds a torn record followed by good ones.
/// </remarks>
internal sealed class WriteAheadLog : IAsyncDisposable
{
    /// <summary>How often a failed log tries to write again.</summary>
    public static readonly TimeSpan RetryInterval = TimeSpan.FromSeconds(1);

    // Largest group buffer kept for reuse; a burst's larger buffer is let go after its flush.
    private const int KeptBufferBytes = 16 << 20;

    private readonly object _gate = new();
    private readonly string _directory;
    private readonly IDataFiles _files;
    private readonly TimeSpan _syncInterval;
    private readonly ILogger _logger;
    private readonly Action<TimeSpan>? _syncObserved;
    private readonly SemaphoreSlim _wake = new(0);
    private readonly CancellationTokenSource _stopping = new();
    private readonly Task _loop;
    private MemoryStream _pending = new();

    // The buffer the last group was written from, emptied, for the next group to fill: a fresh
    // buffer per group regrew by doubling every few milliseconds, through large-object-heap sizes
    // once a group held more than a few batches. Null while the flushing loop holds it.
    private MemoryStream? _spare = new();
    private TaskCompletionSource _group = NewGroup();
    private TaskCompletionSource? _flushing;
    private Stream _segment;
    private string _segmentPath;
    private long _durableLength;
    private MemoryStream? _unwritten;
    // Read lock-free on every batch (the store asks before applying one); written under the gate.
    private volatile string? _trouble;
    private bool _signaled;
    private bool _rotateRequested;
    private ulong _rotateAt;
    private TaskCompletionSource? _rotated;

    public WriteAheadLog(string directory, ulong firstLsn, TimeSpan syncInterval, ILogger logger, IDataFiles files, Action<TimeSpan>? syncObserved = null)
    {
        _directory = directory;
        _files = files;
        _syncInterval = syncInterval;
        _logger = logger;
        _syncObserved = syncObserved;
        Directory.CreateDirectory(directory);
        _segmentPath = Path.Combine(_directory, SegmentName(firstLsn));
        _segment = files.OpenAppend(_segmentPath);
        _durableLength = _segment.Length;
        _loop = Task.Run(RunAsync);
    }

    /// <summary>Why the log cannot write now, or null when it can.</summary>
    public string? Trouble => _trouble;

    /// <summary>Queues a record; the task completes once it is on disk, or fails if the write fails (the record is then written when the disk allows).</summary>
    public Task Append(LogRecord record)
    {
        lock (_gate)
        {
            RecordFraming.Write(_pending, record);
            Signal();
            return _group.Task;
        }
    }

    /// <summary>Queues the record of a batch of values, encoded straight from it; completes as <see cref="Append(LogRecord)"/> does.</summary>
    public Task AppendValues(LoggedWrite values, uint formatVersion)
    {
        lock (_gate)
        {
            RecordFraming.Write(_pending, values, formatVersion);
            Signal();
            return _group.Task;
        }
    }

    /// <summary>Completes once everything appended so far is durable; fails at once while the log cannot write.</summary>
    public Task Barrier()
    {
        lock (_gate)
        {
            if (_trouble is not null)
            {
                return Task.FromException(new IOException(_trouble));
            }

            if (_pending.Length > 0)
            {
                Signal();
                return _group.Task;
            }

            return _flushing?.Task ?? Task.CompletedTask;
        }
    }

    /// <summary>Starts a new segment named after <paramref name="nextLsn"/> once everything queued so far is durable.</summary>
    public Task RotateAsync(ulong nextLsn)
    {
        lock (_gate)
        {
            _rotateRequested = true;
            _rotateAt = nextLsn;
            _rotated ??= new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
            Signal();
            return _rotated.Task;
        }
    }

    public async ValueTask DisposeAsync()
    {
        _stopping.Cancel();
        await _loop.ConfigureAwait(false);
        try
        {
            await _segment.DisposeAsync().ConfigureAwait(false);
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            // Nothing more can be saved at this point; start-up cuts a torn tail.
        }

        _wake.Dispose();
        _stopping.Dispose();
    }

    public static string SegmentName(ulong firstLsn) => $"{firstLsn:D20}.log";

    private async Task RunAsync()
    {
        while (true)
        {
            try
            {
                // A log in trouble tries again every retry interval, with or without new records.
                await _wake.WaitAsync(Trouble is null ? Timeout.InfiniteTimeSpan : RetryInterval, _stopping.Token).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                Flush();
                return;
            }

            long started = Environment.TickCount64;
            Flush();
            TimeSpan left = _syncInterval - TimeSpan.FromMilliseconds(Environment.TickCount64 - started);
            if (left > TimeSpan.Zero)
            {
                try
                {
                    await Task.Delay(left, _stopping.Token).ConfigureAwait(false);
                }
                catch (OperationCanceledException)
                {
                    Flush();
                    return;
                }
            }
        }
    }

    private void Flush()
    {
        MemoryStream batch;
        TaskCompletionSource group;
        bool rotate;
        ulong rotateAt;
        TaskCompletionSource? rotated;
        lock (_gate)
        {
            batch = _pending;
            group = _group;
            _flushing = group;
            _pending = _spare ?? new MemoryStream();
            _spare = null;
            _group = NewGroup();
            rotate = _rotateRequested;
            rotateAt = _rotateAt;
            rotated = _rotated;
            _rotateRequested = false;
            _rotated = null;
            _signaled = false;
        }

        try
        {
            if (_unwritten is not null)
            {
                Repair();
            }

            if (batch.Length > 0)
            {
                long started = Environment.TickCount64;
                batch.Position = 0;
                batch.CopyTo(_segment);
                _files.Flush(_segment);
                _durableLength = _segment.Position;
                _syncObserved?.Invoke(TimeSpan.FromMilliseconds(Environment.TickCount64 - started));
            }

            Recovered();
            group.TrySetResult();
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            Failed(batch, ex);
            group.TrySetException(new IOException($"the write-ahead log could not be written: {ex.Message}", ex));
            rotated?.TrySetException(ex);
            return;
        }

        batch.SetLength(0);
        lock (_gate)
        {
            _spare = batch.Capacity <= KeptBufferBytes ? batch : null;
        }

        if (rotate)
        {
            Rotate(rotateAt, rotated!);
        }
    }

    // The segment back to its last durable length, then the bytes that failed before, in order.
    private void Repair()
    {
        try
        {
            _segment.Dispose();
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            // The old handle may be as broken as the disk was; a fresh one follows.
        }

        _segment = _files.OpenAppend(_segmentPath);
        _segment.SetLength(_durableLength);
        _segment.Seek(0, SeekOrigin.End);
        _unwritten!.Position = 0;
        _unwritten.CopyTo(_segment);
        _files.Flush(_segment);
        _durableLength = _segment.Position;
        _unwritten = null;
    }

    private void Failed(MemoryStream batch, Exception ex)
    {
        _unwritten ??= new MemoryStream();
        _unwritten.Write(batch.GetBuffer(), 0, (int)batch.Length);
        bool first;
        lock (_gate)
        {
            first = _trouble is null;
            _trouble = ex.Message;
        }

        if (first)
        {
            _logger.LogError("Write-ahead log write failed ({Reason}); batches are refused until it can write again, tried every {Retry}.", ex.Message, DurationText.Format(RetryInterval));
        }
    }

    private void Recovered()
    {
        lock (_gate)
        {
            if (_trouble is null)
            {
                return;
            }

            _trouble = null;
        }

        _logger.LogWarning("Write-ahead log writes again; batches are accepted.");
    }

    // The new segment is opened before the old is let go, so a disk that refuses a new file leaves the log where it was.
    private void Rotate(ulong nextLsn, TaskCompletionSource rotated)
    {
        try
        {
            string path = Path.Combine(_directory, SegmentName(nextLsn));
            Stream next = _files.OpenAppend(path);
            _segment.Dispose();
            _segment = next;
            _segmentPath = path;
            _durableLength = next.Length;
            rotated.TrySetResult();
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            rotated.TrySetException(ex);
        }
    }

    // One pending wake-up at most, however many appends arrive before the loop runs.
    private void Signal()
    {
        if (!_signaled)
        {
            _signaled = true;
            _wake.Release();
        }
    }

    private static TaskCompletionSource NewGroup() => new(TaskCreationOptions.RunContinuationsAsynchronously);
}
