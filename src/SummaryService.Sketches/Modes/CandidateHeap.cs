using System.Runtime.CompilerServices;

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

    /// <summary>Whether a key just raised to <paramref name="estimate"/> has to be looked at: the set has room, or the estimate beats the floor.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public bool Wants(long estimate) => Count < Limit || estimate > _counts[0];

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

    private bool Below(int a, int b) => _counts[a] < _counts[b] || (_counts[a] == _counts[b] && _keys[a] < _keys[b]);

    private void SiftUp(int at)
    {
        while (at > 0)
        {
            int parent = (at - 1) / 2;
            if (!Below(at, parent))
            {
                return;
            }

            Swap(at, parent);
            at = parent;
        }
    }

    private void SiftDown(int at)
    {
        while (true)
        {
            int left = (2 * at) + 1;
            if (left >= Count)
            {
                return;
            }

            int child = left + 1 < Count && Below(left + 1, left) ? left + 1 : left;
            if (!Below(child, at))
            {
                return;
            }

            Swap(at, child);
            at = child;
        }
    }

    private void Swap(int a, int b)
    {
        (_keys[a], _keys[b]) = (_keys[b], _keys[a]);
        (_counts[a], _counts[b]) = (_counts[b], _counts[a]);
    }
}
