using System.Diagnostics;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Benchmarks.Store;

/// <summary>
/// Store figures that take seconds rather than nanoseconds, so they run as a console bench:
/// ingest rate by durability, window query latency, snapshot size and time, memory per series.
/// </summary>
/// <remarks>Run: <c>dotnet run -c Release --project tests/SummaryService.Benchmarks -- store [quick] [queries | append]</c>.</remarks>
public static class StoreBench
{
    private const int Series = 1000;
    private const int BatchValues = 1000;
    private static readonly int[] WalProducers = [32, 128, 512];
    private static readonly string[] Names = Enumerable.Range(0, Series).Select(i => $"bench.s{i}").ToArray();

    public static void Run(TextWriter output, bool quick, bool queriesOnly = false, bool appendOnly = false)
    {
        var duration = TimeSpan.FromSeconds(quick ? 1 : 4);
        output.WriteLine($"# Store bench ({Environment.ProcessorCount} cores, {(quick ? "quick" : "full")})");
        output.WriteLine();
        output.WriteLine("| figure | value |");
        output.WriteLine("|---|---|");
        if (!queriesOnly)
        {
            Ingest(output, duration);
        }

        if (appendOnly)
        {
            return;
        }

        Queries(output, quick);
        if (!queriesOnly)
        {
            Snapshots(output, quick);
        }
    }

    private static void Ingest(TextWriter output, TimeSpan duration)
    {
        // Tiered compilation runs the first seconds on unoptimised code: each rate is taken after a
        // warm-up run of the same path, as a long-running server would see it.
        var warmUp = duration / 2;
        IngestNone(warmUp);
        var (none, allocated) = IngestNone(duration);
        output.WriteLine($"| append, durability none, 1 thread, {Series} series × {BatchValues}-value batches | {none / 1e6:F1} M values/s, {allocated:F0} bytes allocated per batch |");
        FoldWithoutStore(warmUp);
        double bare = FoldWithoutStore(duration);
        output.WriteLine($"| the same batches folded straight into {Series} sketches, no store (the bound on the first row) | {bare / 1e6:F1} M values/s |");
        IngestNone(warmUp, Environment.ProcessorCount);
        var (everyCore, _) = IngestNone(duration, Environment.ProcessorCount);
        output.WriteLine($"| append, durability none, {Environment.ProcessorCount} threads, same batches (what the wal rows can reach) | {everyCore / 1e6:F1} M values/s |");
        // Group commit acknowledges every waiting batch with one fsync, so the rate grows with the
        // batches in flight until the CPU is the bound: one row per level of concurrency.
        foreach (int producers in WalProducers)
        {
            IngestWal(warmUp, producers);
            var (wal, fsyncs) = IngestWal(duration, producers);
            output.WriteLine($"| append, durability wal, {producers} concurrent producers, same batches | {wal / 1e6:F1} M values/s ({fsyncs:F0} fsyncs/s) |");
        }
    }

    private static void Queries(TextWriter output, bool quick)
    {
        var (hourCold, hourMedian, hourP99) = QueryLatency(TimeSpan.FromHours(1), quick);
        output.WriteLine($"| Summarize 1 h window (360 full 10 s buckets) | first {hourCold:F1} ms, then median {hourMedian:F2} ms, p99 {hourP99:F2} ms |");
        var (weekCold, weekMedian, weekP99) = QueryLatency(TimeSpan.FromDays(7), quick);
        output.WriteLine($"| Summarize 7 d window (2160 × 10 s + 9720 × 1 min buckets) | first {weekCold:F0} ms, then median {weekMedian:F2} ms, p99 {weekP99:F2} ms |");
        var (perStep, oneCall) = StepsLatency(quick);
        output.WriteLine($"| Timeline 6h at 1m steps (2160 full 10s buckets), one Summarize per step | first {perStep.FirstMs:F0} ms, then median {perStep.MedianMs:F2} ms, p99 {perStep.P99Ms:F2} ms |");
        output.WriteLine($"| Timeline 6h at 1m steps, one SummarizeSteps call | first {oneCall.FirstMs:F0} ms, then median {oneCall.MedianMs:F2} ms, p99 {oneCall.P99Ms:F2} ms |");
    }

    private static void Snapshots(TextWriter output, bool quick)
    {
        var (seconds, bytes, series, buckets, perIdle, peakGrowth) = Snapshot(quick ? 1000 : 10_000);
        output.WriteLine($"| snapshot of {series} series × {buckets / series} buckets (5 values each) | {seconds:F1} s, {bytes / 1e6:F0} MB, peak RSS +{peakGrowth / 1e6:F0} MB while writing |");
        output.WriteLine($"| memory per idle series (one bucket of one value), GC heap | {perIdle:F0} bytes |");
    }

    private static double[][] Batches(int count)
    {
        var rng = new Random(1);
        return Enumerable.Range(0, count)
            .Select(_ => Enumerable.Range(0, BatchValues).Select(_ => Math.Exp(3 + (0.8 * NextGaussian(rng)))).ToArray())
            .ToArray();
    }

    // Allocation per batch is counted alongside the rate: unlike the rate it does not move with the
    // machine's load. With one writer per core it is the CPU bound of the wal rows, which run on every
    // core too; each writer takes its own share of the series.
    private static (double ValuesPerSecond, double BytesPerBatch) IngestNone(TimeSpan duration, int writers = 1)
    {
        var store = new ShardedSeriesStore(new StoreOptions(), TimeProvider.System);
        var batches = Batches(64);
        long values = 0;
        long appended = 0;
        long allocated = 0;
        var watch = Stopwatch.StartNew();
        var threads = Enumerable.Range(0, writers).Select(w => new Thread(() =>
        {
            long mine = 0;
            long count = 0;
            long allocatedBefore = GC.GetAllocatedBytesForCurrentThread();
            for (int i = w; watch.Elapsed < duration; i += writers, count++)
            {
                mine += store.AppendAsync(new SeriesBatch { Metric = Names[i % Series], Values = batches[i % batches.Length] }).Result.Accepted;
            }

            Interlocked.Add(ref allocated, GC.GetAllocatedBytesForCurrentThread() - allocatedBefore);
            Interlocked.Add(ref appended, count);
            Interlocked.Add(ref values, mine);
        })).ToArray();
        foreach (var thread in threads)
        {
            thread.Start();
        }

        foreach (var thread in threads)
        {
            thread.Join();
        }

        return (values / watch.Elapsed.TotalSeconds, allocated / (double)appended);
    }

    // What the append rate cannot exceed: the sketch updates alone, one sketch per series, same batches in the same order.
    private static double FoldWithoutStore(TimeSpan duration)
    {
        var sketches = new SeriesSketch[Series];
        for (int i = 0; i < Series; i++)
        {
            sketches[i] = new SeriesSketch(seed: (ulong)i);
        }

        var batches = Batches(64);
        long values = 0;
        var watch = Stopwatch.StartNew();
        for (int i = 0; watch.Elapsed < duration; i++)
        {
            double[] batch = batches[i % batches.Length];
            sketches[i % Series].Add(batch);
            values += batch.Length;
        }

        return values / watch.Elapsed.TotalSeconds;
    }

    private static (double ValuesPerSecond, double FsyncsPerSecond) IngestWal(TimeSpan duration, int producers)
    {
        string dir = Path.Combine(Path.GetTempPath(), "summaryservice-bench", Guid.NewGuid().ToString("N"));
        long fsyncs = 0;
        var store = PersistentSeriesStore.Open(new StoreOptions(), new PersistenceOptions { DataDirectory = dir }, TimeProvider.System, NullLogger.Instance, _ => Interlocked.Increment(ref fsyncs));
        var batches = Batches(64);
        long values = 0;
        var watch = Stopwatch.StartNew();
        var tasks = Enumerable.Range(0, producers).Select(p => Task.Run(async () =>
        {
            for (int i = p; watch.Elapsed < duration; i += producers)
            {
                var result = await store.AppendAsync(new SeriesBatch { Metric = Names[i % Series], Values = batches[i % batches.Length] });
                Interlocked.Add(ref values, result.Accepted);
            }
        })).ToArray();
        Task.WaitAll(tasks);
        double elapsed = watch.Elapsed.TotalSeconds;
        store.CloseWithoutSnapshotAsync().AsTask().Wait();
        Directory.Delete(dir, recursive: true);
        return (values / elapsed, fsyncs / elapsed);
    }

    // The first query builds and caches the blocks it can; later ones reuse them, as a dashboard's repeated queries do.
    private static (double FirstMs, double MedianMs, double P99Ms) QueryLatency(TimeSpan window, bool quick)
    {
        var (store, range) = FilledStore(window);
        var options = new SummaryOptions();
        return Timed(quick ? 10 : 60, () => store.SummarizeAsync(new SeriesSelector("bench.q"), range, [], options).AsTask().GetAwaiter().GetResult());
    }

    // The load generator's Series query: 6 h at 1 min steps, its window not aligned to the buckets,
    // so each step widens to seven 10 s buckets; each way gets its own store, so both start cold.
    private static ((double FirstMs, double MedianMs, double P99Ms) PerStep, (double FirstMs, double MedianMs, double P99Ms) OneCall) StepsLatency(bool quick)
    {
        var window = TimeSpan.FromHours(6);
        var options = new SummaryOptions();
        int runs = quick ? 5 : 20;
        (double, double, double) Measure(Action<ShardedSeriesStore, TimeWindow> query)
        {
            var (store, range) = FilledStore(window);
            range = new TimeWindow(range.FromUnixMs - 4_321, range.ToUnixMs - 4_321);
            return Timed(runs, () => query(store, range));
        }

        var perStep = Measure((store, range) =>
        {
            for (long from = range.FromUnixMs; from < range.ToUnixMs; from += 60_000)
            {
                store.SummarizeAsync(new SeriesSelector("bench.q"), new TimeWindow(from, Math.Min(from + 60_000, range.ToUnixMs)), [], options).AsTask().GetAwaiter().GetResult();
            }
        });
        var oneCall = Measure((store, range) => store.SummarizeStepsAsync(new SeriesSelector("bench.q"), range, 60_000, [], options).AsTask().GetAwaiter().GetResult());
        return (perStep, oneCall);
    }

    // One series with a bucket at every 10 s for the last 6 h and every minute before that, each of
    // two thousand values: past k = 200, so every bucket is a full, compacted sketch.
    private static (ShardedSeriesStore Store, TimeWindow Range) FilledStore(TimeSpan window)
    {
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var store = new ShardedSeriesStore(new StoreOptions(), clock);
        long now = clock.GetUtcNow().ToUnixTimeMilliseconds();
        var batches = Batches(2);
        for (long t = now - (long)window.TotalMilliseconds; t < now; t += t < now - (6 * 3_600_000L) ? 60_000 : 10_000)
        {
            store.AppendAsync(new SeriesBatch { Metric = "bench.q", Values = batches[0], TimeUnixMs = t }).AsTask().Wait();
            store.AppendAsync(new SeriesBatch { Metric = "bench.q", Values = batches[1], TimeUnixMs = t }).AsTask().Wait();
        }

        return (store, new TimeWindow(now - (long)window.TotalMilliseconds, now));
    }

    private static (double FirstMs, double MedianMs, double P99Ms) Timed(int runs, Action query)
    {
        var samples = new List<double>();
        double first = 0;
        for (int i = 0; i < runs + 3; i++)
        {
            var watch = Stopwatch.StartNew();
            query();
            if (i == 0)
            {
                first = watch.Elapsed.TotalMilliseconds;
            }
            else if (i >= 3)
            {
                samples.Add(watch.Elapsed.TotalMilliseconds);
            }
        }

        samples.Sort();
        return (first, samples[samples.Count / 2], samples[(int)Math.Min(samples.Count - 1, Math.Ceiling(samples.Count * 0.99) - 1)]);
    }

    private static (double Seconds, long Bytes, int Series, long Buckets, double BytesPerIdleSeries, long PeakGrowth) Snapshot(int seriesCount)
    {
        string dir = Path.Combine(Path.GetTempPath(), "summaryservice-bench", Guid.NewGuid().ToString("N"));
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var store = PersistentSeriesStore.Open(new StoreOptions { MaxSeries = 1_000_000, MaxSeriesPerTenant = 1_000_000, MemoryBudgetBytes = 16L << 30 }, new PersistenceOptions { DataDirectory = dir, Durability = DurabilityMode.Snapshot }, clock, NullLogger.Instance);
        long now = clock.GetUtcNow().ToUnixTimeMilliseconds();
        double[] five = [12, 15, 9, 30, 11];
        for (int s = 0; s < seriesCount; s++)
        {
            for (int b = 0; b < 360; b++)
            {
                store.AppendAsync(new SeriesBatch { Metric = $"bench.snap{s}", Values = five, TimeUnixMs = now - (b * 10_000L) }).AsTask().Wait();
            }
        }

        // What the snapshot adds on top of the store, as the operating system sees it.
        using var process = System.Diagnostics.Process.GetCurrentProcess();
        process.Refresh();
        long peakBefore = Math.Max(process.PeakWorkingSet64, process.WorkingSet64);
        var info = store.TakeSnapshotAsync().Result;
        process.Refresh();
        long peakGrowth = process.PeakWorkingSet64 - peakBefore;
        long buckets = store.GetStats().Buckets;
        store.CloseWithoutSnapshotAsync().AsTask().Wait();
        Directory.Delete(dir, recursive: true);

        // Idle series: measured on the GC heap after a full collection, before and after adding them.
        var idle = new ShardedSeriesStore(new StoreOptions { MaxSeries = 1_000_000, MaxSeriesPerTenant = 1_000_000 }, clock);
        GC.Collect();
        long before = GC.GetTotalMemory(forceFullCollection: true);
        for (int s = 0; s < 10_000; s++)
        {
            idle.AppendAsync(new SeriesBatch { Metric = $"bench.idle{s}", Values = new[] { 1.0 }, TimeUnixMs = now }).AsTask().Wait();
        }

        long after = GC.GetTotalMemory(forceFullCollection: true);
        GC.KeepAlive(idle);
        return (info.Elapsed.TotalSeconds, info.Bytes, seriesCount, buckets, (after - before) / 10_000.0, peakGrowth);
    }

    private static double NextGaussian(Random rng) =>
        Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
}
