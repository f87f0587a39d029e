using Grpc.Core;
using SummaryService.Contract.V1;

namespace SummaryService.LoadTest.Baseline;

/// <summary>The baseline's <c>Ingest.PushStream</c>: checks each batch, appends its raw values, replies in order.</summary>
public sealed class RawIngestService(RawValueStore store, TimeProvider time) : Ingest.IngestBase
{
    /// <inheritdoc/>
    public override async Task PushStream(IAsyncStreamReader<Batch> requestStream, IServerStreamWriter<PushReply> responseStream, ServerCallContext context)
    {
        ArgumentNullException.ThrowIfNull(requestStream);
        ArgumentNullException.ThrowIfNull(responseStream);
        ArgumentNullException.ThrowIfNull(context);
        await foreach (Batch batch in requestStream.ReadAllAsync(context.CancellationToken).ConfigureAwait(false))
        {
            await responseStream.WriteAsync(Apply(batch), context.CancellationToken).ConfigureAwait(false);
        }
    }

    private PushReply Apply(Batch batch)
    {
        string? error = Check(batch);
        if (error is not null)
        {
            return new PushReply { Sequence = batch.Sequence, ErrorCode = nameof(StatusCode.InvalidArgument), Error = error };
        }

        long now = time.GetUtcNow().ToUnixTimeMilliseconds();
        long[] times = new long[batch.ValueTimesUnixMs.Count];
        for (int i = 0; i < times.Length; i++)
        {
            times[i] = batch.ValueTimesUnixMs[i] == 0 ? now : batch.ValueTimesUnixMs[i];
        }

        double[] values = new double[batch.Values.Count];
        batch.Values.CopyTo(values, 0);
        store.SeriesOf(batch.Metric, batch.Labels).Append(values, times, batch.TimeUnixMs == 0 ? now : batch.TimeUnixMs);
        return new PushReply { Sequence = batch.Sequence, Accepted = (ulong)values.Length };
    }

    private static string? Check(Batch batch)
    {
        if (batch.Metric.Length == 0)
        {
            return "metric is empty.";
        }

        if (batch.Values.Count == 0)
        {
            return "values is empty.";
        }

        if (batch.ValueTimesUnixMs.Count != 0 && batch.ValueTimesUnixMs.Count != batch.Values.Count)
        {
            return $"value_times_unix_ms has {batch.ValueTimesUnixMs.Count} entries for {batch.Values.Count} values.";
        }

        for (int i = 0; i < batch.Values.Count; i++)
        {
            if (!double.IsFinite(batch.Values[i]))
            {
                return $"values[{i}] is {batch.Values[i]}; values must be finite numbers.";
            }
        }

        return null;
    }
}
