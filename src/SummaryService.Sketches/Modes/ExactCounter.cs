namespace SummaryService.Sketches.Modes;

/// <summary>
/// Exact count per key in an open-addressed table sized to the data, used while distinct keys are
/// few. Empty slots are marked by a count of 0, so any 64-bit key may be stored.
/// </summary>
internal sealed class ExactCounter
{
    private long[] _keys;
    private long[] _counts;

    public ExactCounter(int initialSlots = 16)
    {
        _keys = new long[initialSlots];
        _counts = new long[initialSlots];
    }

    public int Distinct { get; private set; }

    public long EstimatedBytes => 32 + 48 + (16L * _keys.Length);

    public void Add(long key, long count)
    {
        int mask = _keys.Length - 1;
        int slot = (int)(ModeKey.Hash(key) & (uint)mask);
        while (_counts[slot] != 0)
        {
            if (_keys[slot] == key)
            {
                _counts[slot] += count;
                return;
            }

            slot = (slot + 1) & mask;
        }

        _keys[slot] = key;
        _counts[slot] = count;
        Distinct++;
        if (Distinct * 4 > _keys.Length * 3)
        {
            Grow();
        }
    }

    public long CountOf(long key)
    {
        int mask = _keys.Length - 1;
        int slot = (int)(ModeKey.Hash(key) & (uint)mask);
        while (_counts[slot] != 0)
        {
            if (_keys[slot] == key)
            {
                return _counts[slot];
            }

            slot = (slot + 1) & mask;
        }

        return 0;
    }

    /// <summary>Entries in ascending key order, which makes serialization deterministic.</summary>
    public (long Key, long Count)[] SortedEntries()
    {
        var entries = new (long Key, long Count)[Distinct];
        int next = 0;
        for (int slot = 0; slot < _keys.Length; slot++)
        {
            if (_counts[slot] != 0)
            {
                entries[next++] = (_keys[slot], _counts[slot]);
            }
        }

        Array.Sort(entries, static (a, b) => a.Key.CompareTo(b.Key));
        return entries;
    }

    public ExactCounter Clone()
    {
        var copy = (ExactCounter)MemberwiseClone();
        copy._keys = (long[])_keys.Clone();
        copy._counts = (long[])_counts.Clone();
        return copy;
    }

    private void Grow()
    {
        long[] keys = _keys;
        long[] counts = _counts;
        _keys = new long[keys.Length * 2];
        _counts = new long[keys.Length * 2];
        Distinct = 0;
        for (int slot = 0; slot < keys.Length; slot++)
        {
            if (counts[slot] != 0)
            {
                Add(keys[slot], counts[slot]);
            }
        }
    }
}
