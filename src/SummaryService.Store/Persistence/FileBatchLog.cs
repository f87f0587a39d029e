using Microsoft.Extensions.Logging;
using SummaryService.Sketches.Serialization;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Persistence;

/// <summary>
/// The batch log as segment files in one directory: framed, checksummed <c>LogRecord</c>s written with
/// group commit by <see cref="WriteAheadLog"/> through <see cref="IDataFiles"/>, read back by
/// <see cref="LogSegments"/>. It is the only place log records are encoded or decoded.
/// </summary>
public sealed class FileBatchLog : IBatchLog
{
    private readonly string _directory;
    private readonly ILogger _logger;
    private readonly Func<ulong, WriteAheadLog> _open;
    private WriteAheadLog? _log;

    /// <summary>A log in <paramref name="directory"/> (created if missing).</summary>
    /// <param name="directory">The segment files' directory.</param>
    /// <param name="syncInterval">Group commit: fsync at most once per interval.</param>
    /// <param name="logger">Where damage and write trouble are told.</param>
    /// <param name="files">Every write goes through it.</param>
    /// <param name="syncObserved">Called with the duration of each fsync; for telemetry.</param>
    public FileBatchLog(string directory, TimeSpan syncInterval, ILogger logger, IDataFiles files, Action<TimeSpan>? syncObserved = null)
    {
        _directory = directory;
        _logger = logger;
        _open = firstLsn => new WriteAheadLog(directory, firstLsn, syncInterval, logger, files, syncObserved);
        Directory.CreateDirectory(directory);
    }

    /// <inheritdoc/>
    public string? Trouble => _log?.Trouble;

    /// <inheritdoc/>
    public IEnumerable<LoggedWrite> ReadAll(RecoveryReport report)
    {
        ArgumentNullException.ThrowIfNull(report);
        var writes = new List<LoggedWrite>();
        foreach (LogRecord record in LogSegments.ReadAll(_directory, _logger, report))
        {
            if (StoreRecordCodec.ReplayableWrite(record, report, _logger) is { } write)
            {
                writes.Add(write);
            }
        }

        return writes;
    }

    /// <inheritdoc/>
    public void Start(ulong firstLsn)
    {
        if (_log is not null)
        {
            throw new InvalidOperationException("the batch log was started already.");
        }

        _log = _open(firstLsn);
    }

    /// <inheritdoc/>
    public Task Append(LoggedWrite write)
    {
        ArgumentNullException.ThrowIfNull(write);
        return write.Sketch is null ? Started.AppendValues(write, LogSegments.FormatVersion) : Started.Append(StoreRecordCodec.ToRecord(write));
    }

    /// <inheritdoc/>
    public Task Barrier() => Started.Barrier();

    /// <inheritdoc/>
    public Task RotateAsync(ulong nextLsn) => _log is null ? Task.CompletedTask : _log.RotateAsync(nextLsn);

    /// <inheritdoc/>
    public void DeleteBefore(ulong keepFrom) => LogSegments.DeleteBefore(_directory, keepFrom, _logger);

    /// <inheritdoc/>
    public async ValueTask DisposeAsync()
    {
        if (_log is not null)
        {
            await _log.DisposeAsync().ConfigureAwait(false);
        }
    }

    private WriteAheadLog Started => _log ?? throw new InvalidOperationException("the batch log is not started; nothing can be appended before Start.");
}
