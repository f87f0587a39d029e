using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Benchmarks.Updates;

/// <summary>
/// Each part of the composite span update alone, per value, on the same 1e6-value fill, so that
/// the composite figure can be split into its parts.
/// </summary>
/// <remarks>
/// A component's public span <c>Add</c> runs the finite-value check and then its own update, while
/// the composite runs the check once and all four updates, so
/// composite ≈ moments + quantiles + log buckets + modes − 3 × finite check. Targets: the log
/// buckets alone at most 5 ns per value.
/// </remarks>
[MemoryDiagnoser]
public class ComponentSpanUpdateBenchmarks : DistributionFill
{
    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public MomentSketch Moments()
    {
        var sketch = new MomentSketch();
        ReadOnlySpan<double> values = Values;
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.Slice(start, SampleData.SpanLength));
        }

        return sketch;
    }

    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public KllSketch Quantiles()
    {
        var sketch = new KllSketch(seed: 7);
        ReadOnlySpan<double> values = Values;
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.Slice(start, SampleData.SpanLength));
        }

        return sketch;
    }

    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public LogBucketSketch LogBuckets()
    {
        var sketch = new LogBucketSketch();
        ReadOnlySpan<double> values = Values;
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.Slice(start, SampleData.SpanLength));
        }

        return sketch;
    }

    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public ModeSketch Modes()
    {
        var sketch = new ModeSketch();
        ReadOnlySpan<double> values = Values;
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.Slice(start, SampleData.SpanLength));
        }

        return sketch;
    }

    // Every public span Add runs this check first; measured alone so it can be taken out of the sums.
    [Benchmark(OperationsPerInvoke = SampleData.FullSketchValues)]
    public int FiniteCheck()
    {
        ReadOnlySpan<double> values = Values;
        int found = 0;
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            found += FiniteValues.IndexOfNonFinite(values.Slice(start, SampleData.SpanLength));
        }

        return found;
    }
}
