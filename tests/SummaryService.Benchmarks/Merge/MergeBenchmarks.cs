using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;

namespace SummaryService.Benchmarks.Merge;

/// <summary>
/// Merge of two full default sketches (1e6 values each). Target: at most 20 µs for the merge itself.
/// </summary>
/// <remarks>
/// <see cref="SeriesSketch.Merge"/> changes its target, so every invocation merges into a fresh clone;
/// the merge cost is <see cref="CloneThenMerge"/> − <see cref="Clone"/>, which is why the clone is the
/// baseline. The two sketches see different data and different compaction coins, as two hosts would.
/// </remarks>
[MemoryDiagnoser]
public class MergeBenchmarks
{
    private SeriesSketch _target = null!;
    private SeriesSketch _source = null!;

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _target = FullSketch.Build(Distribution, dataSeed: 1, sketchSeed: 11);
        _source = FullSketch.Build(Distribution, dataSeed: 2, sketchSeed: 12);
    }

    [Benchmark(Baseline = true)]
    public SeriesSketch Clone() => _target.Clone();

    [Benchmark]
    public SeriesSketch CloneThenMerge()
    {
        SeriesSketch merged = _target.Clone();
        merged.Merge(_source);
        return merged;
    }
}
