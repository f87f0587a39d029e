namespace SummaryService.Client.Recording;

/// <summary>Shutting down with a final flush.</summary>
public sealed partial class MeasurementRecorder
{
    /// <summary>
    /// Stops accepting values (later ones are counted as dropped), sends everything buffered and waits
    /// for the server's answers, at most <see cref="MeasurementRecorderOptions.DisposeTimeout"/>. What is
    /// still unanswered then is counted in <see cref="RecorderStatistics.ValuesAbandoned"/> and logged.
    /// </summary>
    public ValueTask DisposeAsync() => DisposeAsync(CancellationToken.None);

    /// <summary>As <see cref="DisposeAsync()"/>, and <paramref name="cancellationToken"/> cuts the final flush short.</summary>
    public async ValueTask DisposeAsync(CancellationToken cancellationToken)
    {
        if (Interlocked.Exchange(ref _disposed, 1) != 0)
        {
            return;
        }

        _closed = true;
        _budget.Close();
        await _stopFlushing.CancelAsync().ConfigureAwait(false);
        await _flushing.ConfigureAwait(false);
        SealEverything();
        _ledger.Complete();

        using var limit = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        limit.CancelAfter(_options.DisposeTimeout);
        try
        {
            await _sending.WaitAsync(limit.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            // Gave up waiting: stop the sender and account for what it still held.
        }

        await _stopSending.CancelAsync().ConfigureAwait(false);
        try
        {
            await _sending.ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            // The sender was cut short; what it held is abandoned below.
        }

        _delivery.AbandonUnanswered();
        _ledger.AbandonQueued();
        long abandoned = _ledger.ValuesAbandoned;
        if (abandoned > 0)
        {
            RecorderLog.Abandoned(_logger, _options.DisposeTimeout, abandoned);
        }

        _stopSending.Dispose();
        _stopFlushing.Dispose();
    }
}
