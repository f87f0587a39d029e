using Google.Protobuf.WellKnownTypes;
using SummaryService.Contract.V1;

namespace SummaryService.Container.Tests.Support;

/// <summary>
/// Batches of one producer numbered 1, 2, 3, …, each holding whole numbers that depend on its
/// number, so the count and the exact sum of a summary tell which batches a store holds: whole
/// numbers up to 1000 add up in doubles without rounding.
/// </summary>
internal sealed class NumberedBatches(string metric, string producer, int valuesPerBatch)
{
    public string Metric => metric;

    public int ValuesPerBatch => valuesPerBatch;

    public Batch Batch(ulong sequence)
    {
        var batch = new Batch { Metric = metric, Producer = producer, Sequence = sequence };
        for (int j = 0; j < valuesPerBatch; j++)
        {
            batch.Values.Add(Value(sequence, j));
        }

        return batch;
    }

    /// <summary>The count and sum a store holding exactly batches 1 to <paramref name="last"/> reports.</summary>
    public (ulong Count, double Sum) Expected(ulong last)
    {
        double sum = 0;
        for (ulong sequence = 1; sequence <= last; sequence++)
        {
            for (int j = 0; j < valuesPerBatch; j++)
            {
                sum += Value(sequence, j);
            }
        }

        return (last * (ulong)valuesPerBatch, sum);
    }

    /// <summary>The last hour of the metric, where every batch lands (they carry no time, so "now").</summary>
    public SummarizeRequest LastHour() => new()
    {
        Selector = new Contract.V1.Selector { Metric = metric },
        Window = new Window { Last = Duration.FromTimeSpan(TimeSpan.FromHours(1)) },
    };

    private static double Value(ulong sequence, int j) => 1 + ((sequence * 31 + (ulong)j * 7) % 1000);
}
