using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// A producer as a well-behaved client runs one: its batches go one at a time, each under its own
/// sequence; a batch that is not answered (the node is gone, or its partition is moving) is sent
/// again with the same producer and sequence, to the next node, until one acknowledges it. Sending
/// the next batch only after the last was acknowledged keeps the partitions' highest-sequence marks
/// from passing a batch still unacknowledged.
/// </summary>
internal sealed class RetryingProducer(IReadOnlyList<GrpcChannel> nodes, int firstNode)
{
    private static readonly TimeSpan Pause = TimeSpan.FromMilliseconds(200);

    private int _acknowledged;

    /// <summary>Batches acknowledged so far (applied now or found applied before).</summary>
    public int Acknowledged => Volatile.Read(ref _acknowledged);

    /// <summary>Answers that said a batch was applied before: a retry of a batch whose first reply was lost.</summary>
    public int Duplicates { get; private set; }

    /// <summary>Sends every batch until acknowledged; fails when one is refused or stays unanswered past the deadline.</summary>
    public async Task SendAllAsync(IReadOnlyList<Batch> batches, TimeSpan deadline)
    {
        using var limit = new CancellationTokenSource(deadline);
        int node = firstNode;
        foreach (Batch batch in batches)
        {
            while (true)
            {
                try
                {
                    PushReply reply = await new Ingest.IngestClient(nodes[node]).PushAsync(batch, deadline: DateTime.UtcNow.AddSeconds(20), cancellationToken: limit.Token);
                    Assert.True(reply.Duplicate || reply.Accepted == (ulong)batch.Values.Count, $"batch {batch.Producer}/{batch.Sequence}: {reply}");
                    Duplicates += reply.Duplicate ? 1 : 0;
                    Interlocked.Increment(ref _acknowledged);
                    break;
                }
                catch (RpcException ex) when (ex.StatusCode is StatusCode.Unavailable or StatusCode.DeadlineExceeded && !limit.IsCancellationRequested)
                {
                    node = (node + 1) % nodes.Count;
                    await Task.Delay(Pause, limit.Token);
                }
            }
        }
    }
}
