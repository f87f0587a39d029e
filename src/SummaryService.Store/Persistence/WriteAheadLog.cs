using Google.Protobuf;
using Microsoft.Extensions.Logging;
using SummaryService.Store.Persistence.Formats;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Appends accepted batches to log segments and makes them durable with group commit: one
/// background loop writes whatever has accumulated, fsyncs, and releases every waiter of that
/// group, then waits out the sync interval so that fsyncs happen at most once per interval.
/// </summary>
internal sealed class WriteAheadLog : IAsyncDisposable
{
    // Largest group buffer kept for reuse; a burst's larger buffer is let go after its flush.
    private const int KeptBufferBytes = 16 << 20;

    private readonly object _gate = new();
    private readonly string _directory;
    private readonly TimeSpan _syncInterval;
    private readonly ILogger _logger;
    private readonly Action<TimeSpan>? _syncObserved;
    private readonly SemaphoreSlim _wake = new(0);
    private readonly CancellationTokenSource _stopping = new();
    private readonly Task _loop;
    private MemoryStream _pending = new();

    // The buffer the last group was written from, emptied, for the next group to fill: a fresh
    // buffer per group regrew by doubling every few milliseconds, through large-object-heap sizes
    // once a group held more than a few batches. Null while the flushing loop holds it, or after a failed write.
    private MemoryStream? _spare = new();
    private TaskCompletionSource _group = NewGroup();
    private FileStream _segment;
    private Exception? _failure;
    private bool _signaled;
    private bool _rotateRequested;
    private ulong _rotateAt;
    private TaskCompletionSource? _rotated;

    public WriteAheadLog(string directory, ulong firstLsn, TimeSpan syncInterval, ILogger logger, Action<TimeSpan>? syncObserved = null)
    {
        _directory = directory;
        _syncInterval = syncInterval;
        _logger = logger;
        _syncObserved = syncObserved;
        Directory.CreateDirectory(directory);
        _segment = OpenSegment(firstLsn);
        _loop = Task.Run(RunAsync);
    }

    /// <summary>Queues a record; the task completes once it is on disk.</summary>
    public Task Append(LogRecord record)
    {
        lock (_gate)
        {
            if (_failure is not null)
            {
                throw new IOException("The write-ahead log has failed; no batch can be made durable.", _failure);
            }

            RecordFraming.Write(_pending, record);
            Signal();
            return _group.Task;
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
        await _segment.DisposeAsync().ConfigureAwait(false);
        _wake.Dispose();
        _stopping.Dispose();
    }

    public static string SegmentName(ulong firstLsn) => $"{firstLsn:D20}.log";

    private FileStream OpenSegment(ulong firstLsn)
    {
        string path = Path.Combine(_directory, SegmentName(firstLsn));
        return new FileStream(path, FileMode.Append, FileAccess.Write, FileShare.Read, bufferSize: 1 << 16, FileOptions.None);
    }

    private async Task RunAsync()
    {
        while (true)
        {
            try
            {
                await _wake.WaitAsync(_stopping.Token).ConfigureAwait(false);
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
            if (batch.Length > 0)
            {
                long started = Environment.TickCount64;
                batch.Position = 0;
                batch.CopyTo(_segment);
                _segment.Flush(flushToDisk: true);
                _syncObserved?.Invoke(TimeSpan.FromMilliseconds(Environment.TickCount64 - started));
            }

            group.TrySetResult();
            batch.SetLength(0);
            lock (_gate)
            {
                _spare = batch.Capacity <= KeptBufferBytes ? batch : null;
            }
            if (rotate)
            {
                _segment.Dispose();
                _segment = OpenSegment(rotateAt);
                rotated!.TrySetResult();
            }
        }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            _logger.LogError(ex, "Write-ahead log write failed; further batches will be refused.");
            lock (_gate)
            {
                _failure = ex;
            }

            group.TrySetException(ex);
            rotated?.TrySetException(ex);
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
