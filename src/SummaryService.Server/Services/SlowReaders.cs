using Grpc.Core;
using SummaryService.Readable;

namespace SummaryService.Server.Services;

/// <summary>
/// Writing to a server stream whose caller has stopped reading: once HTTP/2 flow control is
/// exhausted a write waits for the reader, and a stream nobody reads would hold its handler, timer
/// and buffers forever. Past the allowed lag the stream is ended with ResourceExhausted instead;
/// the caller finds the status after the updates it had not read.
/// </summary>
public static class SlowReaders
{
    /// <summary>Writes <paramref name="message"/>, or ends the call with ResourceExhausted if the caller takes longer than <paramref name="maxLag"/> to accept it.</summary>
    /// <remarks>
    /// The write itself is not cancelled: a cancelled write resets the HTTP/2 stream, and the caller
    /// would see only "Cancelled". Left pending, it is sent with the status behind it when the caller reads.
    /// </remarks>
    public static async Task WriteOrCutOffAsync<T>(IServerStreamWriter<T> stream, T message, TimeSpan maxLag, TimeProvider time, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(stream);
        Task write = stream.WriteAsync(message, cancellationToken);
        try
        {
            await write.WaitAsync(maxLag, time, cancellationToken).ConfigureAwait(false);
        }
        catch (TimeoutException)
        {
            _ = write.ContinueWith(static pending => pending.Exception, CancellationToken.None, TaskContinuationOptions.OnlyOnFaulted | TaskContinuationOptions.ExecuteSynchronously, TaskScheduler.Default);
            throw new RpcException(new Status(StatusCode.ResourceExhausted, $"the reader of this stream took no update for {DurationText.Format(maxLag)} (Server:WatchMaxLag); updates are not held for a reader that does not read, so the stream ends here. Read as updates arrive, or ask for a longer interval."));
        }
    }
}
