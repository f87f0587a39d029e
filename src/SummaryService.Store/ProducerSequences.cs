namespace SummaryService.Store;

/// <summary>
/// The highest sequence applied per producer, so that a retried batch is applied at most once.
/// Producers number their batches in increasing order; anything at or below the mark is a repeat.
/// </summary>
/// <remarks>
/// Every mark remembers when its producer was last heard from, and marks silent for longer than the
/// store's <see cref="StoreOptions.ProducerMarkRetention"/> are forgotten at the next rollup: a
/// recorder takes a fresh producer id each time its process starts, so without expiry the marks, and
/// every snapshot holding them, would grow with every process that ever sent a batch.
/// </remarks>
public sealed class ProducerSequences : IProducerLedger
{
    private readonly Dictionary<string, ProducerMark> _marks = new(StringComparer.Ordinal);
    private readonly object _gate = new();

    /// <inheritdoc/>
    public int Count
    {
        get
        {
            lock (_gate)
            {
                return _marks.Count;
            }
        }
    }

    /// <inheritdoc/>
    public bool TryClaim(string producer, ulong sequence, long nowMs)
    {
        if (producer.Length == 0 || sequence == 0)
        {
            return true;
        }

        lock (_gate)
        {
            if (_marks.TryGetValue(producer, out ProducerMark mark) && sequence <= mark.Highest)
            {
                _marks[producer] = mark with { LastSeenUnixMs = Math.Max(mark.LastSeenUnixMs, nowMs) };
                return false;
            }

            _marks[producer] = new ProducerMark(sequence, Math.Max(mark.LastSeenUnixMs, nowMs));
            return true;
        }
    }

    /// <inheritdoc/>
    public IReadOnlyDictionary<string, ProducerMark> Export()
    {
        lock (_gate)
        {
            return new Dictionary<string, ProducerMark>(_marks, StringComparer.Ordinal);
        }
    }

    /// <inheritdoc/>
    public void Import(IEnumerable<KeyValuePair<string, ProducerMark>> marks)
    {
        lock (_gate)
        {
            foreach (var (producer, mark) in marks)
            {
                if (producer.Length == 0 || mark.Highest == 0)
                {
                    continue;
                }

                _marks[producer] = _marks.TryGetValue(producer, out ProducerMark current)
                    ? new ProducerMark(Math.Max(current.Highest, mark.Highest), Math.Max(current.LastSeenUnixMs, mark.LastSeenUnixMs))
                    : mark;
            }
        }
    }

    /// <inheritdoc/>
    public int Expire(long cutoffUnixMs)
    {
        lock (_gate)
        {
            int removed = 0;
            foreach (var (producer, mark) in _marks)
            {
                if (mark.LastSeenUnixMs < cutoffUnixMs)
                {
                    // Removing while enumerating is allowed for Dictionary since .NET Core 3.0.
                    _marks.Remove(producer);
                    removed++;
                }
            }

            return removed;
        }
    }
}

/// <summary>A producer's highest applied sequence and when it was last heard from.</summary>
public readonly record struct ProducerMark(ulong Highest, long LastSeenUnixMs);
