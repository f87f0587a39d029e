using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Benchmarks.Summarize;

/// <summary>
/// <see cref="SeriesSketch.Summarize"/> of a full default sketch (1e6 values). Target: at most 50 µs
/// with the 7 default quantiles.
/// </summary>
[MemoryDiagnoser]
public class SummarizeBenchmarks
{
    private static readonly SummaryOptions s_defaults = new();

    // A dashboard-style request: the default quantiles plus a 20-bin histogram and three SLO thresholds (ms).
    private static readonly SummaryOptions s_withHistogramAndRanks = new()
    {
        Histogram = HistogramSpec.Automatic(20),
        RankOf = [50.0, 100.0, 250.0],
    };

    private SeriesSketch _sketch = null!;

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup() => _sketch = FullSketch.Build(Distribution, dataSeed: 1, sketchSeed: 11);

    [Benchmark(Baseline = true)]
    public Summary DefaultQuantiles() => _sketch.Summarize(s_defaults);

    [Benchmark]
    public Summary WithHistogramAndRanks() => _sketch.Summarize(s_withHistogramAndRanks);
}
