using SummaryService.Readable;
using SummaryService.Store;

namespace SummaryService.Server.Hosting;

/// <summary>
/// A background loop on the host's <see cref="TimeProvider"/>: runs the work every interval until
/// the host stops, logging (not crashing on) a failed pass so the next one can succeed.
/// </summary>
public abstract class PeriodicWork(TimeProvider time, ILogger logger) : BackgroundService
{
    /// <summary>Time between passes.</summary>
    protected abstract TimeSpan Interval { get; }

    /// <summary>Name for logs.</summary>
    protected abstract string WorkName { get; }

    /// <summary>One pass.</summary>
    protected abstract Task RunOnceAsync(CancellationToken cancellationToken);

    /// <inheritdoc/>
    protected override async Task ExecuteAsync(CancellationToken stoppingToken)
    {
        using var timer = new PeriodicTimer(Interval, time);
        try
        {
            while (await timer.WaitForNextTickAsync(stoppingToken).ConfigureAwait(false))
            {
                try
                {
                    await RunOnceAsync(stoppingToken).ConfigureAwait(false);
                }
                catch (StorageUnavailableException ex)
                {
                    // The disk's trouble, already logged when it began: no stack trace every interval.
                    logger.LogWarning("{Work} failed: {Reason}; trying again in {Interval}.", WorkName, ex.Message, DurationText.Format(Interval));
                }
                catch (Exception ex) when (ex is not OperationCanceledException)
                {
                    logger.LogError(ex, "{Work} failed; trying again in {Interval}.", WorkName, DurationText.Format(Interval));
                }
            }
        }
        catch (OperationCanceledException) when (stoppingToken.IsCancellationRequested)
        {
            // Host stopping.
        }
    }
}
