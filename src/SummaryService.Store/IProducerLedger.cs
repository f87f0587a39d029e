namespace SummaryService.Store;

/// <summary>
/// Producer de-duplication: the highest sequence applied per producer, so that a retried batch is
/// applied at most once. A store asks it under the lock that orders its writes; snapshots export
/// it and recovery imports it. One ledger per store: the single-node store keeps it in memory
/// (<see cref="ProducerSequences"/>); a cluster keeps one per partition with the partition's state.
/// </summary>
public interface IProducerLedger
{
    /// <summary>Producers with a mark.</summary>
    int Count { get; }

    /// <summary>True when the batch is new; it is then recorded as applied. Either way the producer was heard from at <paramref name="nowMs"/>. Batches without a producer or sequence are always new.</summary>
    bool TryClaim(string producer, ulong sequence, long nowMs);

    /// <summary>Copy of every producer's mark, for snapshots.</summary>
    IReadOnlyDictionary<string, ProducerMark> Export();

    /// <summary>Raises marks to at least the given ones (sequence and last-seen time each), as read back from storage.</summary>
    void Import(IEnumerable<KeyValuePair<string, ProducerMark>> marks);

    /// <summary>Forgets the producers last heard from before <paramref name="cutoffUnixMs"/>; returns how many.</summary>
    int Expire(long cutoffUnixMs);
}
