using BenchmarkDotNet.Attributes;
using SummaryService.Formats.Store;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Benchmarks.Store;

/// <summary>
/// The write-ahead log's record of one batch as the load generator's back-fill sends it (4,096
/// values; with per-value times, two runs across a 10 s bucket boundary): framed into the group
/// buffer through the generated <c>LogRecord</c> message (the previous path, the baseline) and
/// encoded straight from the write.
/// </summary>
[MemoryDiagnoser]
public class LogRecordBenchmarks
{
    private const int Values = 4096;
    private readonly MemoryStream _group = new();
    private LoggedWrite _write = null!;

    /// <summary>Per-value times (two runs) or one time for the batch.</summary>
    [Params(true, false)]
    public bool PerValueTimes { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var random = new Random(5);
        double[] values = Enumerable.Range(0, Values).Select(_ => Math.Exp(random.NextDouble() * 6)).ToArray();
        const long Time = 1_800_000_005_000;
        long[] times = [Time];
        if (PerValueTimes)
        {
            times = new long[Values];
            times.AsSpan(0, 1500).Fill(Time);
            times.AsSpan(1500).Fill(Time + 10_000);
        }

        var key = new SeriesKey("loadtest.latency_ms", new Dictionary<string, string> { ["series"] = "s00042" });
        _write = new LoggedWrite(123_456, key, "producer-1", 789, values, times, Sketch: null);
    }

    [Benchmark(Baseline = true)]
    public long ThroughMessage()
    {
        _group.SetLength(0);
        var record = new LogRecord { Lsn = _write.Lsn, Metric = _write.Key.Metric, Producer = _write.Producer, Sequence = _write.Sequence, FormatVersion = LogSegments.FormatVersion };
        foreach (var (name, value) in _write.Key.Labels)
        {
            record.Labels.Add(name, value);
        }

        record.Values.AddRange(_write.Values);
        record.TimesUnixMs.AddRange(_write.TimesUnixMs);
        RecordFraming.Write(_group, record);
        return _group.Length;
    }

    [Benchmark]
    public long Encoded()
    {
        _group.SetLength(0);
        RecordFraming.Write(_group, _write, LogSegments.FormatVersion);
        return _group.Length;
    }
}
