#if BASELINE
extern alias baseline;

using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using Previous = baseline::SummaryService.Sketches.SeriesSketch;

namespace SummaryService.Benchmarks.Baseline;

/// <summary>
/// The composite span update of the current code against the previous code's (built by
/// <c>build-baseline.sh</c>), in one run: each fills a fresh default sketch with the same 1e6 values
/// in spans of 1000. Target: at most 25 ns per value on latency-like data.
/// </summary>
/// <remarks>The previous code's results are returned as <c>object</c>: BenchmarkDotNet's generated
/// runner cannot name a type from an aliased reference.</remarks>
[MemoryDiagnoser]
public class UpdateAgainstPrevious : DistributionFill
{
    [Benchmark(Baseline = true, OperationsPerInvoke = SampleData.FullSketchValues)]
    public object PreviousCode()
    {
        var sketch = new Previous(seed: 7);
        ReadOnlySpan<double> values = Values;
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.Slice(start, SampleData.SpanLength));
        }

        return sketch;
    }

    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public SeriesSketch CurrentCode()
    {
        var sketch = new SeriesSketch(seed: 7);
        FullSketch.FeedInSpans(sketch, Values);
        return sketch;
    }
}
#endif
