using Google.Protobuf.Collections;
using SummaryService.Contract.V1;

namespace SummaryService.LoadTest.Workload;

/// <summary>
/// What the generator sends, as a pure function of the options and the seed: every value of every
/// series and its timestamp. Both targets receive exactly these batches, and the accuracy check
/// regenerates the values of any window instead of keeping a copy of them.
/// </summary>
/// <remarks>
/// The back-fill puts <see cref="PerBucket"/> values into each of <see cref="Buckets"/> consecutive
/// 10 s buckets ending at <see cref="SpanEndUnixMs"/>; all values of one bucket share the bucket's
/// midpoint as their time. Live batches carry time 0 ("now") and land after the span, so windows
/// that end at the span's end hold back-fill only.
/// </remarks>
public sealed class LoadPlan
{
    /// <summary>Width of the finest tier's buckets (the server's default layout).</summary>
    public const long BucketMs = 10_000;

    /// <summary>Metric every series belongs to; its tenant is the part before the first '.'.</summary>
    public const string Metric = "loadtest.latency_ms";

    /// <summary>Label that tells the series apart.</summary>
    public const string SeriesLabel = "series";

    private readonly LatencyTable _table;
    private readonly ulong _seed;

    /// <summary>Fixes the plan.</summary>
    public LoadPlan(ulong seed, int series, int batchSize, int perBucket, int buckets, long spanEndUnixMs)
    {
        _seed = seed;
        _table = new LatencyTable(seed);
        Series = series;
        BatchSize = batchSize;
        PerBucket = perBucket;
        Buckets = buckets;
        SpanEndUnixMs = spanEndUnixMs - (spanEndUnixMs % BucketMs);
    }

    /// <summary>Number of series.</summary>
    public int Series { get; }

    /// <summary>Values per batch.</summary>
    public int BatchSize { get; }

    /// <summary>Back-fill values per bucket and series.</summary>
    public int PerBucket { get; }

    /// <summary>Back-filled buckets per series.</summary>
    public int Buckets { get; }

    /// <summary>End of the back-filled span (bucket-aligned, exclusive).</summary>
    public long SpanEndUnixMs { get; }

    /// <summary>Start of the back-filled span.</summary>
    public long SpanStartUnixMs => SpanEndUnixMs - (Buckets * BucketMs);

    /// <summary>Back-fill values of one series.</summary>
    public long FillValuesPerSeries => (long)PerBucket * Buckets;

    /// <summary>Back-fill batches of one series.</summary>
    public long FillBatchesPerSeries => (FillValuesPerSeries + BatchSize - 1) / BatchSize;

    /// <summary>Back-fill values of all series.</summary>
    public long FillValues => FillValuesPerSeries * Series;

    /// <summary>Label value of series <paramref name="series"/>.</summary>
    public static string SeriesName(int series) => $"s{series:D5}";

    /// <summary>
    /// Values <paramref name="first"/>.. of a series' value sequence. Each batch of the sequence has its
    /// own scale, so values stay distinct although they are read from one table.
    /// </summary>
    public void Values(int series, long first, Span<double> into)
    {
        long offset = (long)(SeededRandom.Mix(_seed ^ ((ulong)series * 0x9E3779B97F4A7C15UL)) & (LatencyTable.Length - 1));
        double seriesScale = 1.0 + (0.05 * (series % 8));
        int done = 0;
        while (done < into.Length)
        {
            long index = first + done;
            long batch = index / BatchSize;
            int run = (int)Math.Min(into.Length - done, ((batch + 1) * BatchSize) - index);
            double jitter = (SeededRandom.Mix(_seed + ((ulong)series << 40) + (ulong)batch) >> 11) * (1.0 / (1UL << 53));
            _table.Fill(offset + index, seriesScale * (1.0 + (1e-3 * jitter)), into.Slice(done, run));
            done += run;
        }
    }

    /// <summary>Back-fill batch <paramref name="batch"/> of a series, with its producer sequence.</summary>
    public Batch FillBatch(int series, long batch, string producer, ulong sequence, double[] scratch)
    {
        long first = batch * BatchSize;
        int count = (int)Math.Min(BatchSize, FillValuesPerSeries - first);
        Span<double> values = scratch.AsSpan(0, count);
        Values(series, first, values);
        var message = NewBatch(series, producer, sequence, values);
        long firstBucket = first / PerBucket;
        long lastBucket = (first + count - 1) / PerBucket;
        if (firstBucket == lastBucket)
        {
            message.TimeUnixMs = BucketTime(firstBucket);
        }
        else
        {
            RepeatedField<long> times = message.ValueTimesUnixMs;
            for (long i = first; i < first + count; i++)
            {
                times.Add(BucketTime(i / PerBucket));
            }
        }

        return message;
    }

    /// <summary>Live batch <paramref name="batch"/> of a series: values after the back-fill, time 0 (the receiver's now).</summary>
    public Batch LiveBatch(int series, long batch, string producer, ulong sequence, double[] scratch)
    {
        Span<double> values = scratch.AsSpan(0, BatchSize);
        Values(series, FillValuesPerSeries + (batch * BatchSize), values);
        return NewBatch(series, producer, sequence, values);
    }

    /// <summary>Where back-fill values <c>[first, first + count)</c> of a series fall: bucket index of value i is i / PerBucket.</summary>
    public long BucketTime(long bucket) => SpanStartUnixMs + (bucket * BucketMs) + (BucketMs / 2);

    private static Batch NewBatch(int series, string producer, ulong sequence, ReadOnlySpan<double> values)
    {
        var message = new Batch { Metric = Metric, Producer = producer, Sequence = sequence };
        message.Labels.Add(SeriesLabel, SeriesName(series));
        message.Values.Capacity = values.Length;
        foreach (double v in values)
        {
            message.Values.Add(v);
        }

        return message;
    }
}
