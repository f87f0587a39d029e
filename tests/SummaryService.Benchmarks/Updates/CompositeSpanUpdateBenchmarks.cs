using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;

namespace SummaryService.Benchmarks.Updates;

/// <summary>
/// Amortized cost per value of <see cref="SeriesSketch.Add(ReadOnlySpan{double})"/> with spans of
/// 1000. Target: at most 30 ns per value.
/// </summary>
/// <remarks>
/// Each invocation fills a fresh sketch with 1e6 values, so the figure includes every buffer growth,
/// every compaction and the switch of modes from exact counts to count-min that a real series goes
/// through, rather than the cheap start of an almost empty sketch or the repeat of one hot span.
/// The allocation column is per value in whole bytes, so the ~100 KB a fill allocates shows as "-";
/// the <c>sizes</c> report gives the per-sketch figure.
/// </remarks>
[MemoryDiagnoser]
public class CompositeSpanUpdateBenchmarks : DistributionFill
{
    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public SeriesSketch AddSpansOf1000()
    {
        var sketch = new SeriesSketch(seed: 7);
        FullSketch.FeedInSpans(sketch, Values);
        return sketch;
    }
}
