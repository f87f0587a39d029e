#if BASELINE
extern alias baseline;

using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using Previous = baseline::SummaryService.Sketches.SeriesSketch;

namespace SummaryService.Benchmarks.Baseline;

/// <summary>
/// Clone-then-merge of two full sketches (1e6 values each, different data and coins) in the current
/// and the previous code, in one run; the merge cost is each one's figure minus its clone's. Target:
/// no slower than the previous code.
/// </summary>
/// <remarks>The previous code's results are returned as <c>object</c>: BenchmarkDotNet's generated
/// runner cannot name a type from an aliased reference.</remarks>
[MemoryDiagnoser]
public class MergeAgainstPrevious
{
    private Previous _previousTarget = null!;
    private Previous _previousSource = null!;
    private SeriesSketch _target = null!;
    private SeriesSketch _source = null!;

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _target = FullSketch.Build(Distribution, dataSeed: 1, sketchSeed: 11);
        _source = FullSketch.Build(Distribution, dataSeed: 2, sketchSeed: 12);
        _previousTarget = Fill(SampleData.Generate(Distribution, SampleData.FullSketchValues, 1), 11);
        _previousSource = Fill(SampleData.Generate(Distribution, SampleData.FullSketchValues, 2), 12);
    }

    [Benchmark(Baseline = true)]
    public object PreviousClone() => _previousTarget.Clone();

    [Benchmark]
    public object PreviousCloneThenMerge()
    {
        Previous merged = _previousTarget.Clone();
        merged.Merge(_previousSource);
        return merged;
    }

    [Benchmark]
    public SeriesSketch CurrentClone() => _target.Clone();

    [Benchmark]
    public SeriesSketch CurrentCloneThenMerge()
    {
        SeriesSketch merged = _target.Clone();
        merged.Merge(_source);
        return merged;
    }

    private static Previous Fill(double[] values, ulong seed)
    {
        var sketch = new Previous(seed: seed);
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.AsSpan(start, SampleData.SpanLength));
        }

        return sketch;
    }
}
#endif
