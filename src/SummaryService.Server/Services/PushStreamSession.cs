using System.Threading.Channels;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Auth;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Store;

namespace SummaryService.Server.Services;

/// <summary>
/// One producer stream: one reply per batch, in order. A refused batch gets an error reply and the
/// stream goes on. When the host stops, every batch read so far is finished and answered, then the
/// stream ends cleanly.
/// </summary>
/// <remarks>
/// Batches are applied in arrival order as they are read, and each reply is sent once its batch is
/// durable. Reading does not wait for the log: a stream that waited for each fsync before reading
/// the next batch would carry one batch per group commit, however fast the store applies them.
/// At most <see cref="MaxUnansweredBatches"/> applied batches wait for their replies; beyond that
/// reading pauses, so a producer cannot run ahead of the disk without bound.
/// <para>
/// On stop the server does not simply end the call while the sender is still writing: HTTP/2
/// clients may then see the connection close before they have read the final status, and report
/// a broken stream although every reply arrived. Instead every reply from then on says
/// <c>stream_ending</c>, batches still arriving are answered "Unavailable" without being applied,
/// and the call ends once the sender has completed its side (or after <see cref="StreamEndingGrace"/>).
/// </para>
/// </remarks>
internal sealed class PushStreamSession(Func<Batch, CancellationToken, Task<PushReply>> apply, IngestBudget budget, ServerMetrics metrics, CancellationToken stopping)
{
    /// <summary>Applied batches a stream may hold unanswered while their log group commits.</summary>
    internal const int MaxUnansweredBatches = 32;

    /// <summary>How long a stopping server waits for a sender to complete its side of a stream.</summary>
    internal static readonly TimeSpan StreamEndingGrace = TimeSpan.FromSeconds(2);

    /// <summary>Reads, applies and answers the stream until the sender completes it, the caller cancels, or the host stops.</summary>
    public async Task RunAsync(IAsyncStreamReader<Batch> requestStream, IServerStreamWriter<PushReply> responseStream, ServerCallContext context)
    {
        CallerAccess access = CallerAccess.Of(context);
        using var reading = CancellationTokenSource.CreateLinkedTokenSource(context.CancellationToken, stopping);
        var unanswered = Channel.CreateBounded<Task<PushReply>>(new BoundedChannelOptions(MaxUnansweredBatches) { SingleReader = true, SingleWriter = true });
        Task answering = AnswerInOrderAsync(unanswered, responseStream, context.CancellationToken);
        try
        {
            try
            {
                await foreach (Batch batch in requestStream.ReadAllAsync(reading.Token).ConfigureAwait(false))
                {
                    int bytes = batch.CalculateSize();
                    await budget.TakeAsync(bytes, reading.Token).ConfigureAwait(false);
                    await unanswered.Writer.WriteAsync(HeldUntilAnsweredAsync(StartBatch(batch, access, context.CancellationToken), bytes), context.CancellationToken).ConfigureAwait(false);
                }
            }
            catch (OperationCanceledException) when (stopping.IsCancellationRequested && !context.CancellationToken.IsCancellationRequested)
            {
                await RefuseUntilSenderCompletesAsync(requestStream, unanswered.Writer, context.CancellationToken).ConfigureAwait(false);
            }
        }
        finally
        {
            unanswered.Writer.TryComplete();
            await answering.ConfigureAwait(false);
        }
    }

    /// <summary>The reply of a batch that was not applied, saying why.</summary>
    public static PushReply ErrorReply(ulong sequence, StatusCode code, string message, string field) =>
        new() { Sequence = sequence, ErrorCode = code.ToString(), Error = message, ErrorField = field };

    // Draining on shutdown: the batches read so far are being answered. Anything the sender wrote
    // before it saw stream_ending is answered "Unavailable" unapplied, so it knows to send it again.
    private async Task RefuseUntilSenderCompletesAsync(IAsyncStreamReader<Batch> requestStream, ChannelWriter<Task<PushReply>> unanswered, CancellationToken cancellationToken)
    {
        using var grace = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        grace.CancelAfter(StreamEndingGrace);
        try
        {
            while (await requestStream.MoveNext(grace.Token).ConfigureAwait(false))
            {
                metrics.BatchRejected("Stopping");
                ulong sequence = requestStream.Current.Sequence;
                string message = $"the server is stopping: batch sequence {sequence} was not applied; send it again on a new stream";
                await unanswered.WriteAsync(Task.FromResult(ErrorReply(sequence, StatusCode.Unavailable, message, "")), cancellationToken).ConfigureAwait(false);
            }
        }
        catch (OperationCanceledException) when (!cancellationToken.IsCancellationRequested)
        {
            // The sender did not complete its side in time; the call ends anyway.
        }
    }

    // Applies the batch now (the store applies synchronously and returns a task for durability);
    // a refusal becomes the batch's error reply when its turn to be answered comes.
    private Task<PushReply> StartBatch(Batch batch, CallerAccess access, CancellationToken cancellationToken)
    {
        try
        {
            access.Require(Scope.Write, batch.Metric, "metric");
        }
        catch (RpcException ex) when (ex.StatusCode == StatusCode.PermissionDenied)
        {
            metrics.BatchRejected("PermissionDenied");
            return Task.FromResult(ErrorReply(batch.Sequence, ex.StatusCode, ex.Status.Detail, "metric"));
        }

        return ReplyOrErrorAsync(batch, cancellationToken);
    }

    private async Task<PushReply> ReplyOrErrorAsync(Batch batch, CancellationToken cancellationToken)
    {
        try
        {
            return await apply(batch, cancellationToken).ConfigureAwait(false);
        }
        catch (StoreRejectedException ex)
        {
            return ErrorReply(batch.Sequence, RpcErrors.CodeOf(ex), ex.Message, ex.Field);
        }
    }

    private async Task<PushReply> HeldUntilAnsweredAsync(Task<PushReply> reply, long bytes)
    {
        try
        {
            return await reply.ConfigureAwait(false);
        }
        finally
        {
            budget.Give(bytes);
        }
    }

    private async Task AnswerInOrderAsync(Channel<Task<PushReply>> unanswered, IServerStreamWriter<PushReply> responseStream, CancellationToken cancellationToken)
    {
        try
        {
            await foreach (Task<PushReply> pending in unanswered.Reader.ReadAllAsync(CancellationToken.None).ConfigureAwait(false))
            {
                PushReply reply = await pending.ConfigureAwait(false);
                reply.StreamEnding = stopping.IsCancellationRequested;
                await responseStream.WriteAsync(reply, cancellationToken).ConfigureAwait(false);
            }
        }
        catch (Exception ex)
        {
            // The reader must not wait on a channel nobody drains any more.
            unanswered.Writer.TryComplete(ex);
            throw;
        }
    }
}
