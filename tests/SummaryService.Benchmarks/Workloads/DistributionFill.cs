using BenchmarkDotNet.Attributes;

namespace SummaryService.Benchmarks.Workloads;

/// <summary>Update benchmarks' shared setup: one full sketch's worth of values of each distribution.</summary>
public abstract class DistributionFill
{
    /// <summary>The values every update benchmark of the run folds in.</summary>
    protected double[] Values { get; private set; } = [];

    [Params(Distribution.LogNormalLatency, Distribution.StatusCodes)]
    public Distribution Distribution { get; set; }

    [GlobalSetup]
    public void Setup() => Values = SampleData.Generate(Distribution, SampleData.FullSketchValues, seed: 42);
}
