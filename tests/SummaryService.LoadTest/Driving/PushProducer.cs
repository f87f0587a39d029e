using System.Diagnostics;
using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;

namespace SummaryService.LoadTest.Driving;

/// <summary>
/// One producer: a single <c>PushStream</c> with up to <c>inflight</c> batches sent ahead of their
/// replies, as a real producer pipelines to hide the log's group-commit wait. The acknowledgement
/// latency of a batch runs from its write to its reply.
/// </summary>
public sealed class PushProducer(GrpcChannel channel, int inflight)
{
    /// <summary>Latency from write to reply, per batch.</summary>
    public LatencySamples Acks { get; } = new();

    /// <summary>Values the server accepted.</summary>
    public long Accepted { get; private set; }

    /// <summary>Replies saying the batch was applied before: each batch is sent once, so every one is the server's mistake.</summary>
    public long Duplicates { get; private set; }

    /// <summary>Replies carrying an error.</summary>
    public long Errors { get; private set; }

    /// <summary>The first error seen, for the report.</summary>
    public string? FirstError { get; private set; }

    /// <summary>Sends the batches <paramref name="next"/> gives (it returns null when done), then waits for every reply.</summary>
    public async Task RunAsync(Func<long, Batch?> next, CancellationToken cancellationToken)
    {
        var client = new Ingest.IngestClient(channel);
        using AsyncDuplexStreamingCall<Batch, PushReply> call = client.PushStream(cancellationToken: cancellationToken);
        using var slots = new SemaphoreSlim(inflight, inflight);
        var sentAt = new System.Collections.Concurrent.ConcurrentQueue<long>();
        Task reading = ReadRepliesAsync(call.ResponseStream, sentAt, slots, cancellationToken);
        for (long i = 0; ; i++)
        {
            Batch? batch = next(i);
            if (batch is null)
            {
                break;
            }

            await slots.WaitAsync(cancellationToken).ConfigureAwait(false);
            sentAt.Enqueue(Stopwatch.GetTimestamp());
            await call.RequestStream.WriteAsync(batch, cancellationToken).ConfigureAwait(false);
        }

        await call.RequestStream.CompleteAsync().ConfigureAwait(false);
        await reading.ConfigureAwait(false);
    }

    private async Task ReadRepliesAsync(IAsyncStreamReader<PushReply> replies, System.Collections.Concurrent.ConcurrentQueue<long> sentAt, SemaphoreSlim slots, CancellationToken cancellationToken)
    {
        while (await replies.MoveNext(cancellationToken).ConfigureAwait(false))
        {
            PushReply reply = replies.Current;
            if (sentAt.TryDequeue(out long started))
            {
                Acks.Add(Stopwatch.GetElapsedTime(started).TotalMilliseconds);
            }

            if (reply.ErrorCode.Length > 0)
            {
                Errors++;
                FirstError ??= $"{reply.ErrorCode}: {reply.Error}";
            }
            else
            {
                Accepted += (long)reply.Accepted;
                Duplicates += reply.Duplicate ? 1 : 0;
            }

            slots.Release();
        }
    }
}
