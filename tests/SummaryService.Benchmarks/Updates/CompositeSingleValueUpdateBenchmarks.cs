using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;

namespace SummaryService.Benchmarks.Updates;

/// <summary>
/// Amortized cost per value of <see cref="SeriesSketch.Add(double)"/>, one call per value, over the
/// same 1e6-value fill as <see cref="CompositeSpanUpdateBenchmarks"/> so the two compare directly.
/// </summary>
[MemoryDiagnoser]
public class CompositeSingleValueUpdateBenchmarks : DistributionFill
{
    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public SeriesSketch AddOneAtATime()
    {
        var sketch = new SeriesSketch(seed: 7);
        foreach (double value in Values)
        {
            sketch.Add(value);
        }

        return sketch;
    }
}
