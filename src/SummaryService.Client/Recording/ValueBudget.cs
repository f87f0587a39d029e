namespace SummaryService.Client.Recording;

/// <summary>
/// How many values the recorder holds (buffered or sent but not yet answered), against a fixed
/// capacity, so that an unreachable server can never make it grow without bound. Taking one unit is a
/// single interlocked increment; only a caller that finds the budget spent and is told to wait takes a lock.
/// </summary>
internal sealed class ValueBudget(long capacity, TimeProvider time)
{
    // Longest single sleep of a waiting caller, so that it re-checks its deadline and the closed flag
    // even if a wake-up were missed.
    private static readonly TimeSpan WaitSlice = TimeSpan.FromMilliseconds(50);

    private readonly object _gate = new();
    private long _held;
    private int _waiters;
    private volatile bool _closed;

    public long Capacity => capacity;

    public long Held => Volatile.Read(ref _held);

    /// <summary>Callers inside <see cref="WaitAndTake"/>: they found the budget spent and wait for room.</summary>
    public int Waiters => Volatile.Read(ref _waiters);

    /// <summary>Takes one unit if there is room.</summary>
    public bool TryTake()
    {
        if (Interlocked.Increment(ref _held) <= capacity)
        {
            return true;
        }

        Interlocked.Decrement(ref _held);
        return false;
    }

    /// <summary>
    /// Waits until a unit is free and takes it; false when <paramref name="timeout"/> passes (infinite
    /// for <see cref="Timeout.InfiniteTimeSpan"/>) or the budget is closed first.
    /// </summary>
    public bool WaitAndTake(TimeSpan timeout)
    {
        long started = time.GetTimestamp();
        Interlocked.Increment(ref _waiters);
        try
        {
            lock (_gate)
            {
                while (!TryTake())
                {
                    if (_closed)
                    {
                        return false;
                    }

                    TimeSpan wait = WaitSlice;
                    if (timeout != Timeout.InfiniteTimeSpan)
                    {
                        TimeSpan left = timeout - time.GetElapsedTime(started);
                        if (left <= TimeSpan.Zero)
                        {
                            return false;
                        }

                        wait = left < wait ? left : wait;
                    }

                    Monitor.Wait(_gate, wait);
                }

                return true;
            }
        }
        finally
        {
            Interlocked.Decrement(ref _waiters);
        }
    }

    /// <summary>Gives back units whose values were answered, dropped or abandoned, waking any waiter.</summary>
    public void Release(long count)
    {
        if (count == 0)
        {
            return;
        }

        Interlocked.Add(ref _held, -count);
        WakeWaiters();
    }

    /// <summary>Wakes every waiter for good: the recorder is shutting down and accepts nothing more.</summary>
    public void Close()
    {
        _closed = true;
        WakeWaiters();
    }

    private void WakeWaiters()
    {
        if (Volatile.Read(ref _waiters) > 0)
        {
            lock (_gate)
            {
                Monitor.PulseAll(_gate);
            }
        }
    }
}
