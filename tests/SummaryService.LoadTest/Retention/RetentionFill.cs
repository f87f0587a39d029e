using System.Globalization;
using SummaryService.Contract.V1;
using SummaryService.LoadTest.Workload;

namespace SummaryService.LoadTest.Retention;

/// <summary>
/// The retention run's data: <c>series</c> steady latency series of <c>perMinute</c> values a
/// minute over <c>days</c> days ending when it was made, each value with its own timestamp, pushed
/// in batches of ten minutes per series. Any range of minutes can be pushed on its own, in any order.
/// </summary>
internal sealed class RetentionFill(int series, int perMinute, int days)
{
    public const string Metric = "otterbyte.retention.latency_ms";

    public const string SeriesLabel = "series";

    private const int MinutesPerBatch = 10;

    private readonly LatencyTable _table = new(seed: 7);

    public int Series => series;

    public long Minutes { get; } = days * 24L * 60;

    /// <summary>End of the span (when the fill was made), Unix milliseconds.</summary>
    public long EndMs { get; } = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();

    public long StartMs => EndMs - (Minutes * 60_000);

    /// <summary>Pushes minutes [<paramref name="from"/>, <paramref name="to"/>) of the span for every series; returns the values pushed.</summary>
    public async Task<long> PushAsync(Ingest.IngestClient ingest, long from, long to, CancellationToken cancellationToken)
    {
        long pushed = 0;
        for (long minute = from; minute < to; minute += MinutesPerBatch)
        {
            int count = (int)Math.Min(MinutesPerBatch, to - minute) * perMinute;
            for (int s = 0; s < series; s++)
            {
                var batch = new Batch { Metric = Metric };
                batch.Labels[SeriesLabel] = s.ToString(CultureInfo.InvariantCulture);
                var values = new double[count];
                _table.Fill((minute * perMinute) + (s * 7919L), 1.0, values);
                batch.Values.AddRange(values);
                for (int i = 0; i < count; i++)
                {
                    // Spread evenly over the batch's minutes, oldest first.
                    batch.ValueTimesUnixMs.Add(StartMs + (minute * 60_000) + ((long)i * 60_000 / perMinute));
                }

                await ingest.PushAsync(batch, cancellationToken: cancellationToken);
                pushed += count;
            }
        }

        return pushed;
    }
}
