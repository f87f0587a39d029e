namespace SummaryService.Store;

/// <summary>
/// The highest sequence applied per producer, so that a retried batch is applied at most once.
/// Producers number their batches in increasing order; anything at or below the mark is a repeat.
/// </summary>
internal sealed class ProducerSequences
{
    private readonly Dictionary<string, ulong> _highest = new(StringComparer.Ordinal);
    private readonly object _gate = new();

    /// <summary>True when the batch is new; it is then recorded as applied.</summary>
    public bool TryClaim(string producer, ulong sequence)
    {
        if (producer.Length == 0 || sequence == 0)
        {
            return true;
        }

        lock (_gate)
        {
            if (_highest.TryGetValue(producer, out ulong highest) && sequence <= highest)
            {
                return false;
            }

            _highest[producer] = sequence;
            return true;
        }
    }

    /// <summary>Copy of every producer's mark, for snapshots.</summary>
    public Dictionary<string, ulong> Export()
    {
        lock (_gate)
        {
            return new Dictionary<string, ulong>(_highest, StringComparer.Ordinal);
        }
    }

    /// <summary>Raises marks to at least the given ones, as read back from storage.</summary>
    public void Import(IEnumerable<KeyValuePair<string, ulong>> marks)
    {
        lock (_gate)
        {
            foreach (var (producer, sequence) in marks)
            {
                if (!_highest.TryGetValue(producer, out ulong current) || sequence > current)
                {
                    _highest[producer] = sequence;
                }
            }
        }
    }
}
