using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Client.Recording;

/// <summary>
/// Per-interval sketches uploaded with <c>Ingest.PushSketch</c>, one call at a time in sequence order.
/// The server keeps only the highest sequence per producer, so uploads must arrive in order: a later
/// one overtaking an earlier one would make the earlier look like a repeat. A failed call is retried
/// with the same sequence after a back-off until it is answered; a refusal is counted and dropped.
/// </summary>
internal sealed class SketchDelivery(Ingest.IngestClient ingest, DeliveryLedger ledger, MeasurementRecorderOptions options, Random random) : IDelivery
{
    private PendingUpload? _inFlight;

    public void Accept(RecordedSeries series, ValueChunk chunk, int count) => series.Sketches!.Fold(chunk, count);

    public void Tick(IEnumerable<RecordedSeries> series, long nowUnixMs, bool everything)
    {
        var due = new List<(long Start, SeriesSketch Sketch)>();
        foreach (RecordedSeries one in series)
        {
            due.Clear();
            one.Sketches!.TakeDue(nowUnixMs, everything, due);
            foreach (var (start, sketch) in due)
            {
                var upload = new SketchUpload { Metric = one.Metric, Sketch = SketchCodec.ToState(sketch), TimeUnixMs = start, Producer = options.Producer };
                foreach (var (name, value) in one.Identity.Labels)
                {
                    upload.Labels.Add(name, value);
                }

                ledger.Offer(new PendingUpload(one, upload, sketch.Count));
            }
        }
    }

    public async Task RunAsync(CancellationToken stop)
    {
        var backoff = new Backoff(options.InitialBackoff, options.MaxBackoff, random);
        try
        {
            while (await ledger.Outbox.WaitToReadAsync(stop).ConfigureAwait(false))
            {
                while (ledger.Outbox.TryRead(out PendingUpload? upload))
                {
                    upload.Sequence = ledger.NextSequence();
                    Volatile.Write(ref _inFlight, upload);
                    await UploadAsync(upload, backoff, stop).ConfigureAwait(false);
                    Volatile.Write(ref _inFlight, null);
                }
            }
        }
        catch (Exception ex) when (ex is OperationCanceledException or RpcException && stop.IsCancellationRequested)
        {
            // Disposal gave up; the upload in hand is abandoned by AbandonUnanswered.
        }
    }

    public void AbandonUnanswered()
    {
        if (Interlocked.Exchange(ref _inFlight, null) is { } upload)
        {
            ledger.Abandon(upload);
        }
    }

    private async Task UploadAsync(PendingUpload upload, Backoff backoff, CancellationToken stop)
    {
        while (true)
        {
            try
            {
                ledger.Sent();
                DateTime deadline = options.TimeProvider.GetUtcNow().UtcDateTime + options.CallTimeout;
                PushReply reply = await ingest.PushSketchAsync(upload.Sketch!, deadline: deadline, cancellationToken: stop).ConfigureAwait(false);
                backoff.Succeeded();
                ledger.Acknowledged(upload, reply);
                return;
            }
            catch (RpcException ex) when (RetryableStatus.IsRetryable(ex.StatusCode) && !stop.IsCancellationRequested)
            {
                ledger.Reconnected();
                TimeSpan delay = backoff.NextDelay();
                RecorderLog.Reconnecting(ledger.Logger, $"{ex.StatusCode}: {ex.Status.Detail}", 1, delay);
                await Task.Delay(delay, options.TimeProvider, stop).ConfigureAwait(false);
            }
            catch (RpcException ex) when (!stop.IsCancellationRequested)
            {
                ledger.Rejected(upload, ex.StatusCode.ToString(), ex.Status.Detail, "");
                return;
            }
        }
    }
}
