namespace SummaryService.Client.Recording;

/// <summary>The recording hot path and the sealing of series buffers.</summary>
public sealed partial class MeasurementRecorder
{
    /// <summary>Takes room in the buffer (per the full-buffer policy), then stores the value in the series' current chunk.</summary>
    internal void Append(RecordedSeries series, double value)
    {
        if (!double.IsFinite(value))
        {
            throw new ArgumentOutOfRangeException(nameof(value), value, $"value {value} for metric '{series.Metric}' is not a finite number; the server refuses NaN and infinities.");
        }

        if (_closed || !TakeRoom())
        {
            Interlocked.Increment(ref _dropped);
            return;
        }

        long now = _time.GetUtcNow().ToUnixTimeMilliseconds();

        // Each pass either stores the value or finds the chunk replaced by another thread's seal.
        while (true)
        {
            ValueChunk chunk = series.Current;
            switch (chunk.TryAppend(value, now))
            {
                case AppendOutcome.Appended:
                    return;
                case AppendOutcome.Filled:
                    Seal(series, chunk, filled: true);
                    return;
                default:
                    Seal(series, chunk, filled: true);
                    break;
            }
        }
    }

    private bool TakeRoom()
    {
        if (_budget.TryTake())
        {
            return true;
        }

        return _options.WhenFull == FullBufferPolicy.Block && _budget.WaitAndTake(_options.BlockTimeout);
    }

    /// <summary>
    /// Swaps a fresh chunk in for <paramref name="chunk"/> if it is still current and hands the old one's
    /// values on. The fresh chunk doubles after a fill and otherwise fits the last interval's volume, so
    /// busy series reach full batches and quiet ones keep small buffers.
    /// </summary>
    private void Seal(RecordedSeries series, ValueChunk chunk, bool filled)
    {
        if (!ReferenceEquals(series.Current, chunk))
        {
            return;
        }

        int next = filled ? Math.Min(chunk.Capacity * 2, _options.MaxBatchValues) : CapacityFor(chunk);
        Interlocked.Increment(ref _sealsInProgress);
        try
        {
            if (!series.TrySwap(chunk, new ValueChunk(next)))
            {
                return;
            }

            int count = chunk.Close();
            if (count > 0)
            {
                _delivery.Accept(series, chunk, count);
            }
        }
        finally
        {
            Interlocked.Decrement(ref _sealsInProgress);
        }
    }

    private int CapacityFor(ValueChunk chunk)
    {
        int used = Math.Min(chunk.Capacity, Math.Max(1, chunk.ClaimedSoFar));
        int fitted = (int)Math.Min((uint)_options.MaxBatchValues, System.Numerics.BitOperations.RoundUpToPowerOf2((uint)used));
        return Math.Max(Math.Min(RecordedSeries.SmallestChunk, _options.MaxBatchValues), fitted);
    }

    /// <summary>Seals every series' buffer, offers what is due, and returns how many uploads have been offered in all.</summary>
    private long SealEverything()
    {
        foreach (var (_, series) in _series)
        {
            ValueChunk chunk = series.Current;
            if (chunk.HasValues)
            {
                Seal(series, chunk, filled: false);
            }
        }

        // A recording thread may be between swapping a chunk and offering it; wait for it so that
        // the count below covers every value recorded before this call.
        var spin = default(SpinWait);
        while (Volatile.Read(ref _sealsInProgress) > 0)
        {
            spin.SpinOnce();
        }

        _delivery.Tick(_series.Values, _time.GetUtcNow().ToUnixTimeMilliseconds(), everything: true);
        return _ledger.Offered;
    }

    private async Task FlushEveryIntervalAsync(CancellationToken stop)
    {
        using var timer = new PeriodicTimer(_options.FlushInterval, _time);
        try
        {
            while (await timer.WaitForNextTickAsync(stop).ConfigureAwait(false))
            {
                foreach (var (_, series) in _series)
                {
                    ValueChunk chunk = series.Current;
                    if (chunk.HasValues)
                    {
                        Seal(series, chunk, filled: false);
                    }
                }

                _delivery.Tick(_series.Values, _time.GetUtcNow().ToUnixTimeMilliseconds(), everything: false);
            }
        }
        catch (OperationCanceledException)
        {
            // Disposal stops the timer.
        }
    }
}
