namespace SummaryService.Sketches.Modes;

/// <summary>
/// The keys a count-min mode sketch tracks as possible modes, each with the estimate it was last
/// tracked at, held as a binary min-heap ordered by (count, key).
/// </summary>
/// <remarks>
/// <para>The rule: a tracked key takes its new estimate; an untracked key joins while there is
/// room, or when its estimate beats the lowest tracked count, replacing the weakest candidate —
/// lowest count, ties to the smallest key. That candidate is the heap's root, so a replacement is
/// one sift instead of scans over the whole set, and which key goes depends on the set alone, not
/// on the order it is held in: a restored sketch evicts exactly what the original would have.</para>
/// <para>On distinct-valued data about one value in ten replaces a candidate, so this sits on the
/// update path. Keys in the set are distinct.</para>
/// </remarks>
internal sealed class CandidateHeap
{
    private long[] _keys = [];
    private long[] _counts = [];

    public CandidateHeap(int limit) => Limit = limit;

    /// <summary>Most keys tracked.</summary>
    public int Limit { get; }

    /// <summary>Keys tracked now.</summary>
    public int Count { get; private set; }

    /// <summary>Lowest tracked count; 0 while empty.</summary>
    public long Floor => Count == 0 ? 0 : _counts[0];

    /// <summary>Tracked keys, in heap order.</summary>
    public ReadOnlySpan<long> Keys => _keys.AsSpan(0, Count);

    /// <summary>Approximate heap bytes of the two arrays.</summary>
    public long EstimatedBytes => 48 + (16L * _keys.Length);

    /// <summary>What a key's new estimate has to exceed to be looked at: nothing while the set has room, else the floor.</summary>
    public long Threshold => Count < Limit ? long.MinValue : _counts[0];

    /// <summary>Whether a key just raised to <paramref name="estimate"/> has to be looked at: the set has room, or the estimate beats the floor.</summary>
    public bool Wants(long estimate) => estimate > Threshold;

    /// <summary>Applies the rule to a key whose estimate is now <paramref name="estimate"/>.</summary>
    public void Track(long key, long estimate)
    {
        int found = Keys.IndexOf(key);
        if (found >= 0)
        {
            long before = _counts[found];
            _counts[found] = estimate;
            if (estimate < before)
            {
                SiftUp(found);
            }
            else
            {
                SiftDown(found);
            }

            return;
        }

        if (Count < Limit)
        {
            if (Count == _keys.Length)
            {
                int grown = Math.Min(Limit, Math.Max(4, Count * 2));
                Array.Resize(ref _keys, grown);
                Array.Resize(ref _counts, grown);
            }

            _keys[Count] = key;
            _counts[Count] = estimate;
            SiftUp(Count++);
            return;
        }

        if (estimate > _counts[0])
        {
            _keys[0] = key;
            _counts[0] = estimate;
            SiftDown(0);
        }
    }

    /// <summary>Replaces the set with <paramref name="entries"/> (distinct keys, at most <see cref="Limit"/>), sized to fit.</summary>
    public void Reset(ReadOnlySpan<(long Key, long Count)> entries)
    {
        _keys = new long[entries.Length];
        _counts = new long[entries.Length];
        for (int i = 0; i < entries.Length; i++)
        {
            (_keys[i], _counts[i]) = entries[i];
        }

        Count = entries.Length;
        for (int i = (Count / 2) - 1; i >= 0; i--)
        {
            SiftDown(i);
        }
    }

    /// <summary>Tracked keys with their counts, in ascending key order.</summary>
    public (long Key, long Count)[] SortedByKey()
    {
        var entries = new (long Key, long Count)[Count];
        for (int i = 0; i < Count; i++)
        {
            entries[i] = (_keys[i], _counts[i]);
        }

        Array.Sort(entries, static (a, b) => a.Key.CompareTo(b.Key));
        return entries;
    }

    public CandidateHeap Clone()
    {
        var copy = (CandidateHeap)MemberwiseClone();
        copy._keys = (long[])_keys.Clone();
        copy._counts = (long[])_counts.Clone();
        return copy;
    }

    // (count, key) order: the weakest candidate has the lowest count, ties going to the smallest
    // key. Non-short-circuit operators keep it free of branches: which of two children is lower is
    // a coin toss, and a branch on it would mispredict about half the time at every level.
    private static bool Below(long count, long key, long otherCount, long otherKey) =>
        (count < otherCount) | ((count == otherCount) & (key < otherKey));

    // Both sifts carry the moving entry in registers and shift the others past it, writing it once
    // where it stops instead of swapping at every level.
    private void SiftUp(int at)
    {
        long[] keys = _keys;
        long[] counts = _counts;
        long key = keys[at];
        long count = counts[at];
        while (at > 0)
        {
            int parent = (at - 1) / 2;
            if (!Below(count, key, counts[parent], keys[parent]))
            {
                break;
            }

            keys[at] = keys[parent];
            counts[at] = counts[parent];
            at = parent;
        }

        keys[at] = key;
        counts[at] = count;
    }

    private void SiftDown(int at)
    {
        long[] keys = _keys;
        long[] counts = _counts;
        long key = keys[at];
        long count = counts[at];
        int size = Count;
        while (true)
        {
            int child = (2 * at) + 1;
            if (child >= size)
            {
                break;
            }

            if (child + 1 < size)
            {
                child += Below(counts[child + 1], keys[child + 1], counts[child], keys[child]) ? 1 : 0;
            }

            if (!Below(counts[child], keys[child], count, key))
            {
                break;
            }

            keys[at] = keys[child];
            counts[at] = counts[child];
            at = child;
        }

        keys[at] = key;
        counts[at] = count;
    }
}
