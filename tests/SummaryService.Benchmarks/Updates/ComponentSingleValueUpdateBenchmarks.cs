using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Benchmarks.Updates;

/// <summary>
/// Each part of the composite single-value update alone, per value, so that
/// <see cref="CompositeSingleValueUpdateBenchmarks"/> can be split into its parts.
/// </summary>
[MemoryDiagnoser]
public class ComponentSingleValueUpdateBenchmarks : DistributionFill
{
    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public MomentSketch Moments()
    {
        var sketch = new MomentSketch();
        foreach (double value in Values)
        {
            sketch.Add(value);
        }

        return sketch;
    }

    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public KllSketch Quantiles()
    {
        var sketch = new KllSketch(seed: 7);
        foreach (double value in Values)
        {
            sketch.Add(value);
        }

        return sketch;
    }

    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public ModeSketch Modes()
    {
        var sketch = new ModeSketch();
        foreach (double value in Values)
        {
            sketch.Add(value);
        }

        return sketch;
    }
}
