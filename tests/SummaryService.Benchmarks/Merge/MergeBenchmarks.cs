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
public class MergeBenchmarks : TwoFullSketches
{
    [Benchmark(Baseline = true)]
    public SeriesSketch Clone() => Target.Clone();

    [Benchmark]
    public SeriesSketch CloneThenMerge()
    {
        SeriesSketch merged = Target.Clone();
        merged.Merge(Source);
        return merged;
    }
}
