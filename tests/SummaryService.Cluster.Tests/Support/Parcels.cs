using SummaryService.Store;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>Invented Otterbyte Parcels data: parcel weights by dock and belt, in batches spread over the last hour.</summary>
internal static class Parcels
{
    public const string Metric = "parcel.weight.grams";

    /// <summary>
    /// Batches of whole grams (exact in floating point, so sums are exact whatever the order), few
    /// enough per group that every quantile sketch stays exact; each with its own producer sequence.
    /// </summary>
    /// <param name="nowMs">The time the batches lead up to.</param>
    /// <param name="perBatch">Values per batch; at 3 even all 144 values together stay under the quantile sketch's exact capacity (k = 200).</param>
    /// <param name="seed">Seed of the invented weights and times.</param>
    public static List<SeriesBatch> Batches(long nowMs, int perBatch = 3, int seed = 7)
    {
        var random = new Random(seed);
        var batches = new List<SeriesBatch>();
        ulong sequence = 0;
        foreach (string dock in new[] { "north", "south", "east" })
        {
            foreach (string belt in new[] { "a", "b", "c", "d" })
            {
                for (int b = 0; b < 4; b++)
                {
                    double[] values = [.. Enumerable.Range(0, perBatch).Select(_ => (double)random.Next(100, 20_000))];
                    batches.Add(new SeriesBatch
                    {
                        Metric = Metric,
                        Labels = new Dictionary<string, string> { ["dock"] = dock, ["belt"] = belt },
                        Values = values,
                        TimeUnixMs = nowMs - random.Next(60_000, 3_600_000),
                        Producer = "sorter-1",
                        Sequence = ++sequence,
                    });
                }
            }
        }

        return batches;
    }

    /// <summary>A batch as a client sends it.</summary>
    public static Contract.V1.Batch ToWire(SeriesBatch batch) => new()
    {
        Metric = batch.Metric,
        Labels = { batch.Labels.ToDictionary() },
        Values = { batch.Values.ToArray() },
        TimeUnixMs = batch.TimeUnixMs,
        Producer = batch.Producer,
        Sequence = batch.Sequence,
    };
}
