namespace SummaryService.Store.Persistence;

/// <summary>
/// Where accepted writes are logged before they are acknowledged, and read back at start-up. The
/// store knows only this interface: today's medium is log segment files (<see cref="FileBatchLog"/>);
/// a database table or a shared log plugs in the same way.
/// </summary>
/// <remarks>
/// Order of use: <see cref="ReadAll"/> once at start-up, then <see cref="Start"/> when the store
/// logs (durability <see cref="DurabilityMode.Wal"/>), then appends. <see cref="Append"/> is called
/// under the lock that orders the store's writes, so it must only queue the record.
/// </remarks>
public interface IBatchLog : IAsyncDisposable
{
    /// <summary>Every readable record, in log order. Damage is reported in <paramref name="report"/>, not thrown, unless the log was written by a newer server.</summary>
    IEnumerable<LoggedWrite> ReadAll(RecoveryReport report);

    /// <summary>Begins appending; the first record appended will carry <paramref name="firstLsn"/> or more.</summary>
    void Start(ulong firstLsn);

    /// <summary>Why the log cannot write now, or null when it can (always null before <see cref="Start"/>).</summary>
    string? Trouble { get; }

    /// <summary>
    /// Queues a record; the task completes once it is durable, or fails if the write fails (the record
    /// is then written when the medium allows). The record must be encoded before this returns: an
    /// uploaded sketch goes into a bucket right after, where later writes change it.
    /// </summary>
    Task Append(LoggedWrite write);

    /// <summary>Completes once everything appended so far is durable; fails at once while the log cannot write.</summary>
    Task Barrier();

    /// <summary>Marks <paramref name="nextLsn"/> as the start of what a snapshot taken now may lack; completes once everything before it is durable.</summary>
    Task RotateAsync(ulong nextLsn);

    /// <summary>Drops what every kept snapshot holds: records below <paramref name="keepFrom"/> may go.</summary>
    void DeleteBefore(ulong keepFrom);
}
