using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;

namespace SummaryService.Reliability.Tests.Support;

/// <summary>
/// One producer on a <c>PushStream</c>, as a careful client behaves: every batch carries the
/// producer's id and the next sequence number; a batch stays in the unanswered list until its reply;
/// after a broken stream the unanswered ones go out again, in order, before anything new.
/// Batch <c>s</c> holds <see cref="ValuesPerBatch"/> copies of the number <c>s</c>: batches 1..H then
/// have exactly known count, sum, sum of squares, minimum and maximum, and a lost batch cannot hide
/// behind a repeated one.
/// </summary>
internal sealed class SequencedProducer(string producer, string metric)
{
    public const int ValuesPerBatch = 100;

    private const int MaxUnanswered = 64;
    private readonly object _gate = new();
    private readonly SortedSet<ulong> _unanswered = [];
    private ulong _nextSequence = 1;

    public string Metric { get; } = metric;

    /// <summary>Highest sequence sent so far.</summary>
    public ulong HighestSent => _nextSequence - 1;

    /// <summary>Sequences sent and not yet answered.</summary>
    public int Unanswered
    {
        get
        {
            lock (_gate)
            {
                return _unanswered.Count;
            }
        }
    }

    /// <summary>Sequences answered as applied or as already applied.</summary>
    public SortedSet<ulong> Acknowledged { get; } = [];

    /// <summary>Count, sum and sum of squares of the values of batches 1..<paramref name="sequence"/>.</summary>
    public static (long Count, double Sum, double SumOfSquares) PrefixTotals(ulong sequence)
    {
        double h = sequence;
        return ((long)sequence * ValuesPerBatch, ValuesPerBatch * h * (h + 1) / 2, ValuesPerBatch * h * (h + 1) * ((2 * h) + 1) / 6);
    }

    /// <summary>Resends what is unanswered, then sends new batches until the stream breaks, <paramref name="stop"/> fires, or <paramref name="limit"/> is reached.</summary>
    public async Task RunAsync(GrpcChannel channel, CancellationToken stop, ulong limit = ulong.MaxValue)
    {
        using var call = new Ingest.IngestClient(channel).PushStream(cancellationToken: CancellationToken.None);
        using var window = new SemaphoreSlim(MaxUnanswered);
        Task reading = ReadRepliesAsync(call.ResponseStream, window);
        bool broken = false;
        try
        {
            ulong[] resend;
            lock (_gate)
            {
                resend = [.. _unanswered];
            }

            foreach (ulong sequence in resend)
            {
                await window.WaitAsync(stop).ConfigureAwait(false);
                await call.RequestStream.WriteAsync(BatchOf(sequence)).ConfigureAwait(false);
            }

            while (!stop.IsCancellationRequested && _nextSequence <= limit)
            {
                await window.WaitAsync(stop).ConfigureAwait(false);
                ulong sequence;
                lock (_gate)
                {
                    sequence = _nextSequence++;
                    _unanswered.Add(sequence);
                }

                await call.RequestStream.WriteAsync(BatchOf(sequence)).ConfigureAwait(false);
            }
        }
        catch (OperationCanceledException)
        {
            // The run ended: the stream is completed below and its replies read to the end.
        }
        catch (Exception ex) when (ex is RpcException or InvalidOperationException or IOException)
        {
            // The server went away; what was not answered stays unanswered.
            broken = true;
        }

        if (!broken)
        {
            try
            {
                await call.RequestStream.CompleteAsync().ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is RpcException or InvalidOperationException or IOException)
            {
                // Gone while completing; the replies say how far it got.
            }
        }

        await reading.ConfigureAwait(false);
    }

    private async Task ReadRepliesAsync(IAsyncStreamReader<PushReply> replies, SemaphoreSlim window)
    {
        try
        {
            while (await replies.MoveNext(CancellationToken.None).ConfigureAwait(false))
            {
                PushReply reply = replies.Current;
                if (reply.ErrorCode.Length > 0)
                {
                    throw new InvalidOperationException($"{producer}: batch {reply.Sequence} refused: {reply.ErrorCode} {reply.Error}");
                }

                lock (_gate)
                {
                    _unanswered.Remove(reply.Sequence);
                    Acknowledged.Add(reply.Sequence);
                }

                window.Release();
            }
        }
        catch (RpcException)
        {
            // Killed mid-stream.
        }
    }

    private Batch BatchOf(ulong sequence)
    {
        var batch = new Batch { Metric = Metric, Producer = producer, Sequence = sequence };
        for (int i = 0; i < ValuesPerBatch; i++)
        {
            batch.Values.Add(sequence);
        }

        return batch;
    }
}
