using BenchmarkDotNet.Attributes;
using SummaryService.Benchmarks.Workloads;
using SummaryService.Sketches;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Benchmarks.Merge;

/// <summary>
/// Clone and clone-then-merge of the quantile and mode parts alone, so that the composite merge
/// cost can be split between them (the moments are a handful of fields and need no breakdown).
/// </summary>
[MemoryDiagnoser]
public class ComponentMergeBenchmarks
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

    [Benchmark]
    public KllSketch QuantilesClone() => _target.Quantiles.Clone();

    [Benchmark]
    public KllSketch QuantilesCloneThenMerge()
    {
        KllSketch merged = _target.Quantiles.Clone();
        merged.Merge(_source.Quantiles);
        return merged;
    }

    [Benchmark]
    public ModeSketch ModesClone() => _target.Modes.Clone();

    [Benchmark]
    public ModeSketch ModesCloneThenMerge()
    {
        ModeSketch merged = _target.Modes.Clone();
        merged.Merge(_source.Modes);
        return merged;
    }
}
