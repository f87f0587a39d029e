using System.Buffers;
using SummaryService.Contract.V1;
using SummaryService.Store;

namespace SummaryService.Server.Mapping;

/// <summary>
/// A wire batch as a store batch whose value and time arrays are rented from the shared pool rather
/// than allocated per batch: at thousands of batches a second, fresh 32 KB arrays are most of what
/// ingest gives the garbage collector. The store copies what it keeps, so the arrays go back to the
/// pool when the append has completed (dispose only then).
/// </summary>
public sealed class RentedBatch : IDisposable
{
    private double[]? _values;
    private long[]? _times;

    /// <summary>Copies the wire batch's fields; the packed values and times are copied into pooled arrays.</summary>
    public RentedBatch(Batch batch)
    {
        ArgumentNullException.ThrowIfNull(batch);
        int count = batch.Values.Count;
        _values = ArrayPool<double>.Shared.Rent(count);
        batch.Values.CopyTo(_values, 0);
        int timeCount = batch.ValueTimesUnixMs.Count;
        ReadOnlyMemory<long> times = ReadOnlyMemory<long>.Empty;
        if (timeCount > 0)
        {
            _times = ArrayPool<long>.Shared.Rent(timeCount);
            batch.ValueTimesUnixMs.CopyTo(_times, 0);
            times = _times.AsMemory(0, timeCount);
        }

        Batch = new SeriesBatch
        {
            Metric = batch.Metric,
            Labels = new Dictionary<string, string>(batch.Labels, StringComparer.Ordinal),
            Values = _values.AsMemory(0, count),
            TimeUnixMs = batch.TimeUnixMs,
            ValueTimesUnixMs = times,
            Producer = batch.Producer,
            Sequence = batch.Sequence,
        };
    }

    /// <summary>The store's view of the batch; valid until dispose.</summary>
    public SeriesBatch Batch { get; }

    /// <summary>Returns the arrays to the pool.</summary>
    public void Dispose()
    {
        if (_values is { } values)
        {
            _values = null;
            ArrayPool<double>.Shared.Return(values);
        }

        if (_times is { } times)
        {
            _times = null;
            ArrayPool<long>.Shared.Return(times);
        }
    }
}
