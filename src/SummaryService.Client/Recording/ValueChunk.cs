namespace SummaryService.Client.Recording;

/// <summary>
/// A fixed run of (value, time) slots that many threads fill without a lock: each writer claims a
/// slot with one interlocked increment and then writes it. Whoever seals the chunk closes it to new
/// claims and waits for the writers that already hold a slot, so a sealed chunk is complete and no
/// longer changes. A chunk is never reused, so a writer holding a stale reference cannot write into
/// another series' buffer.
/// </summary>
internal sealed class ValueChunk
{
    private readonly double[] _values;
    private readonly long[] _times;
    private int _claimed;
    private int _written;

    public ValueChunk(int capacity)
    {
        _values = new double[capacity];
        _times = new long[capacity];
    }

    public int Capacity => _values.Length;

    /// <summary>True when a slot has been claimed since the chunk was created.</summary>
    public bool HasValues => Volatile.Read(ref _claimed) > 0;

    /// <summary>Slots claimed so far (may exceed the capacity once full); sizes the series' next chunk.</summary>
    public int ClaimedSoFar => Volatile.Read(ref _claimed);

    /// <summary>The values, valid up to the count <see cref="Close"/> returned.</summary>
    public double[] Values => _values;

    /// <summary>Unix-millisecond record times, parallel to <see cref="Values"/>.</summary>
    public long[] Times => _times;

    /// <summary>Writes one value into a claimed slot, or reports that the chunk is full or closed.</summary>
    public AppendOutcome TryAppend(double value, long timeUnixMs)
    {
        int slot = Interlocked.Increment(ref _claimed) - 1;
        if (slot >= _values.Length)
        {
            return AppendOutcome.Full;
        }

        _values[slot] = value;
        _times[slot] = timeUnixMs;
        Interlocked.Increment(ref _written);
        return slot == _values.Length - 1 ? AppendOutcome.Filled : AppendOutcome.Appended;
    }

    /// <summary>
    /// Refuses further claims and returns the number of slots written, once every writer that claimed
    /// one has finished. Called once, by the thread that swapped the chunk out of its series.
    /// </summary>
    public int Close()
    {
        int claimed = Math.Min(Interlocked.Exchange(ref _claimed, _values.Length), _values.Length);
        var spin = default(SpinWait);
        while (Volatile.Read(ref _written) < claimed)
        {
            // A writer between its claim and its store: a few instructions away, unless preempted.
            spin.SpinOnce();
        }

        return claimed;
    }
}

/// <summary>What <see cref="ValueChunk.TryAppend"/> did.</summary>
internal enum AppendOutcome
{
    /// <summary>Stored, room left.</summary>
    Appended,

    /// <summary>Stored in the last slot; the caller seals the chunk.</summary>
    Filled,

    /// <summary>Not stored: the chunk is full or closed; retry on the series' current chunk.</summary>
    Full,
}
