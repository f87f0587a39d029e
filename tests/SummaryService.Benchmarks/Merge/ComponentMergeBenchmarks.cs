using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Benchmarks.Merge;

/// <summary>
/// Clone and clone-then-merge of the quantile, log-bucket and mode parts alone, so that the
/// composite merge cost can be split between them (the moments are a handful of fields and need no breakdown).
/// </summary>
[MemoryDiagnoser]
public class ComponentMergeBenchmarks : TwoFullSketches
{
    [Benchmark]
    public KllSketch QuantilesClone() => Target.Quantiles!.Clone();

    [Benchmark]
    public KllSketch QuantilesCloneThenMerge()
    {
        KllSketch merged = Target.Quantiles!.Clone();
        merged.Merge(Source.Quantiles!);
        return merged;
    }

    [Benchmark]
    public LogBucketSketch BucketsClone() => Target.LogBuckets!.Clone();

    [Benchmark]
    public LogBucketSketch BucketsCloneThenMerge()
    {
        LogBucketSketch merged = Target.LogBuckets!.Clone();
        merged.Merge(Source.LogBuckets!);
        return merged;
    }

    [Benchmark]
    public ModeSketch ModesClone() => Target.Modes.Clone();

    [Benchmark]
    public ModeSketch ModesCloneThenMerge()
    {
        ModeSketch merged = Target.Modes.Clone();
        merged.Merge(Source.Modes);
        return merged;
    }
}
