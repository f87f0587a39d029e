using Grpc.Core;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Recording;

/// <summary>
/// Raw batches over one long-lived <c>Ingest.PushStream</c>. Each batch gets the next sequence when
/// first written and joins the unanswered queue; the server answers in order, so each reply resolves
/// the queue's head. When the stream breaks, the queue is kept, the stream reopened after a back-off,
/// and every unanswered batch written again in order before anything new: the server acknowledges the
/// ones it had applied as duplicates, so nothing is counted twice and nothing is lost.
/// A stopping server marks its replies <c>stream_ending</c>: the recorder then writes nothing more,
/// completes its side so the call ends cleanly, and sends what was left unapplied on the next stream.
/// </summary>
internal sealed class StreamDelivery(Ingest.IngestClient ingest, DeliveryLedger ledger, MeasurementRecorderOptions options, Random random) : IDelivery
{
    private readonly Queue<PendingUpload> _unanswered = new();

    public void Accept(RecordedSeries series, ValueChunk chunk, int count)
    {
        var batch = new Batch { Metric = series.Metric, Producer = options.Producer };
        foreach (var (name, value) in series.Identity.Labels)
        {
            batch.Labels.Add(name, value);
        }

        batch.Values.AddRange(count == chunk.Capacity ? chunk.Values : chunk.Values.AsSpan(0, count).ToArray());
        long first = chunk.Times[0];
        bool oneTime = true;
        for (int i = 1; i < count && oneTime; i++)
        {
            oneTime = chunk.Times[i] == first;
        }

        if (oneTime)
        {
            batch.TimeUnixMs = first;
        }
        else
        {
            batch.ValueTimesUnixMs.AddRange(count == chunk.Capacity ? chunk.Times : chunk.Times.AsSpan(0, count).ToArray());
        }

        ledger.Offer(new PendingUpload(series, batch, count));
    }

    public void Tick(IEnumerable<RecordedSeries> series, long nowUnixMs, bool everything)
    {
        // Raw batches are offered as they are sealed; nothing waits for a tick.
    }

    public async Task RunAsync(CancellationToken stop)
    {
        var backoff = new Backoff(options.InitialBackoff, options.MaxBackoff, random);
        while (!stop.IsCancellationRequested)
        {
            (bool finished, string reason) = await RunOneStreamAsync(backoff, stop).ConfigureAwait(false);
            if (finished || stop.IsCancellationRequested)
            {
                return;
            }

            ledger.Reconnected();
            TimeSpan delay = backoff.NextDelay();
            RecorderLog.Reconnecting(ledger.Logger, reason, UnansweredCount(), delay);
            try
            {
                await Task.Delay(delay, options.TimeProvider, stop).ConfigureAwait(false);
            }
            catch (OperationCanceledException)
            {
                return;
            }
        }
    }

    public void AbandonUnanswered()
    {
        lock (_unanswered)
        {
            while (_unanswered.TryDequeue(out PendingUpload? upload))
            {
                ledger.Abandon(upload);
            }
        }
    }

    /// <summary>One stream's life; true when it ended because everything was sent and answered.</summary>
    private async Task<(bool Finished, string Reason)> RunOneStreamAsync(Backoff backoff, CancellationToken stop)
    {
        using var callStop = CancellationTokenSource.CreateLinkedTokenSource(stop);
        using AsyncDuplexStreamingCall<Batch, PushReply> call = ingest.PushStream(cancellationToken: callStop.Token);
        var ending = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        Task<StatusCode?> replies = ReadRepliesAsync(call.ResponseStream, backoff, ending, callStop.Token);
        string reason = "the server ended the stream";
        StatusCode? writeFailure = null;
        try
        {
            foreach (PendingUpload upload in UnansweredSnapshot())
            {
                if (ending.Task.IsCompleted)
                {
                    break;
                }

                await call.RequestStream.WriteAsync(upload.Batch!, callStop.Token).ConfigureAwait(false);
                ledger.Sent();
            }

            while (true)
            {
                Task<bool> more = ledger.Outbox.WaitToReadAsync(callStop.Token).AsTask();
                Task first = ending.Task.IsCompleted ? ending.Task : await Task.WhenAny(more, replies, ending.Task).ConfigureAwait(false);
                if (first == ending.Task)
                {
                    // The server is stopping: close our side so the call ends cleanly; the rest goes on the next stream.
                    reason = "the server is stopping";
                    await call.RequestStream.CompleteAsync().ConfigureAwait(false);
                    await replies.ConfigureAwait(false);
                    break;
                }

                if (first == replies)
                {
                    break;
                }

                if (!await more.ConfigureAwait(false))
                {
                    // Disposal: nothing more will come. Close our side and let the server answer the rest.
                    await call.RequestStream.CompleteAsync().ConfigureAwait(false);
                    await replies.ConfigureAwait(false);
                    if (UnansweredCount() == 0)
                    {
                        return (true, "");
                    }

                    break;
                }

                while (!ending.Task.IsCompleted && ledger.Outbox.TryRead(out PendingUpload? upload))
                {
                    upload.Sequence = ledger.NextSequence();
                    lock (_unanswered)
                    {
                        _unanswered.Enqueue(upload);
                    }

                    await call.RequestStream.WriteAsync(upload.Batch!, callStop.Token).ConfigureAwait(false);
                    ledger.Sent();
                }
            }
        }
        catch (Exception ex) when (ex is RpcException or IOException or InvalidOperationException or OperationCanceledException or HttpRequestException)
        {
            reason = ex is RpcException rpc ? $"{rpc.StatusCode}: {rpc.Status.Detail}" : ex.Message;
            writeFailure = (ex as RpcException)?.StatusCode;
        }

        await callStop.CancelAsync().ConfigureAwait(false);
        StatusCode? status = await replies.ConfigureAwait(false) ?? writeFailure;
        if (status is { } code)
        {
            reason = code.ToString();
            if (!RetryableStatus.IsRetryable(code))
            {
                RejectUnanswered(code, call);
            }
        }

        return (false, reason);
    }

    /// <summary>
    /// Resolves the head of the queue with each reply; the failure status when the call failed, else
    /// null. From the first batch a stopping server refused unapplied, the rest stay queued for the next stream.
    /// </summary>
    private async Task<StatusCode?> ReadRepliesAsync(IAsyncStreamReader<PushReply> stream, Backoff backoff, TaskCompletionSource ending, CancellationToken cancellationToken)
    {
        bool unappliedFromHere = false;
        try
        {
            while (await stream.MoveNext(cancellationToken).ConfigureAwait(false))
            {
                PushReply reply = stream.Current;
                if (reply.StreamEnding)
                {
                    ending.TrySetResult();
                    unappliedFromHere |= reply.ErrorCode == nameof(StatusCode.Unavailable);
                }

                if (unappliedFromHere)
                {
                    continue;
                }

                PendingUpload? head;
                lock (_unanswered)
                {
                    if (!_unanswered.TryPeek(out head) || head.Sequence != reply.Sequence)
                    {
                        // Out of step with the server: start a fresh stream and resend from the head.
                        return StatusCode.Internal;
                    }

                    _unanswered.Dequeue();
                }

                backoff.Succeeded();
                if (reply.ErrorCode.Length > 0)
                {
                    ledger.Rejected(head, reply.ErrorCode, reply.Error, reply.ErrorField);
                }
                else
                {
                    ledger.Acknowledged(head, reply);
                }
            }

            return null;
        }
        catch (RpcException ex)
        {
            return cancellationToken.IsCancellationRequested ? null : ex.StatusCode;
        }
        catch (Exception ex) when (ex is OperationCanceledException or IOException or InvalidOperationException or HttpRequestException)
        {
            return cancellationToken.IsCancellationRequested ? null : StatusCode.Unavailable;
        }
    }

    /// <summary>The call itself was refused (credentials, scope): resending would be refused again, so every unanswered batch is given up and counted.</summary>
    private void RejectUnanswered(StatusCode code, AsyncDuplexStreamingCall<Batch, PushReply> call)
    {
        string detail;
        try
        {
            detail = call.GetStatus().Detail;
        }
        catch (InvalidOperationException)
        {
            detail = code.ToString();
        }

        List<PendingUpload> refused;
        lock (_unanswered)
        {
            refused = [.. _unanswered];
            _unanswered.Clear();
        }

        RecorderLog.CredentialsRefused(ledger.Logger, code.ToString(), detail, refused.Count);
        foreach (PendingUpload upload in refused)
        {
            ledger.Rejected(upload, code.ToString(), detail, "");
        }
    }

    private List<PendingUpload> UnansweredSnapshot()
    {
        lock (_unanswered)
        {
            return [.. _unanswered];
        }
    }

    private int UnansweredCount()
    {
        lock (_unanswered)
        {
            return _unanswered.Count;
        }
    }
}
