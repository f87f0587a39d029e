using BenchmarkDotNet.Attributes;
using SummaryService.Sketches;

namespace SummaryService.Benchmarks.Workloads;

/// <summary>Merge benchmarks' shared setup: two full sketches of different data and coins, as two hosts would have.</summary>
public abstract class TwoFullSketches
{
    protected SeriesSketch Target { get; private set; } = null!;

    protected SeriesSketch Source { get; private set; } = null!;

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        Target = FullSketch.Build(Distribution, dataSeed: 1, sketchSeed: 11);
        Source = FullSketch.Build(Distribution, dataSeed: 2, sketchSeed: 12);
    }
}
